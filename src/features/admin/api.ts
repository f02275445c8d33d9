/** The admin feature's HTTP layer (role mapping part). */
import { queryOptions } from '@tanstack/react-query';
import { roleMappingsSchema, type RoleMapping } from '@shared/api/auth.ts';
import {
  regimeNameListSchema,
  regimeNameSchema,
  subscriptionListSchema,
  subscriptionSchema,
  type RegimeName,
  type RegimeNameInput,
  type Subscription,
  type SubscriptionInput,
} from '@shared/api/regime-calls.ts';
import { apiFetch } from '@/lib/api.ts';

export const adminKeys = {
  all: ['admin'] as const,
  roleMappings: () => [...adminKeys.all, 'role-mappings'] as const,
};

export const roleMappingsQuery = queryOptions({
  queryKey: adminKeys.roleMappings(),
  queryFn: async () => roleMappingsSchema.parse(await apiFetch('/api/admin/role-mappings')).mappings,
});

export async function saveRoleMappings(mappings: RoleMapping[]): Promise<RoleMapping[]> {
  const body = await apiFetch('/api/admin/role-mappings', { method: 'PUT', body: JSON.stringify({ mappings }) });
  return roleMappingsSchema.parse(body).mappings;
}

// ---- regime names and mail subscriptions -------------------------------------------------------


export const regimeNamesAdminQuery = queryOptions({
  queryKey: ['regime-names'],
  queryFn: async () => regimeNameListSchema.parse(await apiFetch('/api/regime-names')).names,
});

export async function createRegimeName(input: RegimeNameInput): Promise<RegimeName> {
  const body = await apiFetch<{ name: unknown }>('/api/regime-names', { method: 'POST', body: JSON.stringify(input) });
  return regimeNameSchema.parse(body.name);
}

export async function updateRegimeName(id: number, input: RegimeNameInput): Promise<RegimeName> {
  const body = await apiFetch<{ name: unknown }>(`/api/regime-names/${id}`, { method: 'PUT', body: JSON.stringify(input) });
  return regimeNameSchema.parse(body.name);
}

export const subscriptionsQuery = queryOptions({
  queryKey: [...adminKeys.all, 'subscriptions'],
  queryFn: async () => subscriptionListSchema.parse(await apiFetch('/api/subscriptions')).subscriptions,
});

export async function createSubscription(input: SubscriptionInput): Promise<Subscription> {
  const body = await apiFetch<{ subscription: unknown }>('/api/subscriptions', { method: 'POST', body: JSON.stringify(input) });
  return subscriptionSchema.parse(body.subscription);
}

export async function updateSubscription(id: string, input: SubscriptionInput): Promise<Subscription> {
  const body = await apiFetch<{ subscription: unknown }>(`/api/subscriptions/${encodeURIComponent(id)}`, { method: 'PUT', body: JSON.stringify(input) });
  return subscriptionSchema.parse(body.subscription);
}

export async function deleteSubscription(id: string): Promise<void> {
  await apiFetch(`/api/subscriptions/${encodeURIComponent(id)}`, { method: 'DELETE' });
}
