/** The admin feature's HTTP layer: role mapping, regions, calibration sets. */
import { queryOptions } from '@tanstack/react-query';
import { z } from 'zod';
import { roleMappingsSchema, type RoleMapping } from '@shared/api/auth.ts';
import type { CalibrationParameters } from '@shared/calibration.ts';
import type { RegionGeometry, RegionIssue, RegionProperties } from '@shared/regions.ts';
import { ApiError, apiFetch } from '@/lib/api.ts';
import { roleSchema, type Role } from '@shared/roles.ts';
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

// ---------------------------------------------------------------------------------------------
// Regions (GET/PUT /api/regions) and calibration sets (GET/POST /api/calibration-sets).
// ---------------------------------------------------------------------------------------------

export interface RegionRow {
  id: string;
  name: string;
  kind: 'hydro' | 'solar';
  properties: RegionProperties;
  geometry: RegionGeometry;
  /** km2 */
  areaKm2: number;
}

export interface CalibrationSetRow {
  version: number;
  name: string;
  note: string | null;
  basedOn: number | null;
  parameters: CalibrationParameters;
  createdBy: string | null;
  createdAt: string;
}

export const regionKeys = { all: ['regions'] as const };
export const calibrationKeys = { all: ['calibration-sets'] as const };

export const regionsQuery = queryOptions({
  queryKey: regionKeys.all,
  queryFn: async () => (await apiFetch<{ regions: RegionRow[] }>('/api/regions')).regions,
});

export const calibrationSetsQuery = queryOptions({
  queryKey: calibrationKeys.all,
  queryFn: async () => (await apiFetch<{ sets: CalibrationSetRow[] }>('/api/calibration-sets')).sets,
});

/** A refusal of an upload, with the server's per-feature problems when it gave them. */
export class RegionsRefused extends Error {
  constructor(message: string, readonly issues: RegionIssue[]) {
    super(message);
    this.name = 'RegionsRefused';
  }
}

export async function saveRegions(collection: unknown): Promise<RegionRow[]> {
  try {
    return (await apiFetch<{ regions: RegionRow[] }>('/api/regions', { method: 'PUT', body: JSON.stringify(collection) })).regions;
  } catch (err) {
    if (err instanceof ApiError && err.status === 422) {
      const issues = ((err.details as { issues?: RegionIssue[] } | undefined)?.issues) ?? [];
      throw new RegionsRefused(err.message, issues);
    }
    throw err;
  }
}

export interface NewCalibrationSetInput {
  basedOn: number;
  name?: string;
  note?: string;
  parameters: Partial<CalibrationParameters>;
}

export async function createCalibrationSet(input: NewCalibrationSetInput): Promise<CalibrationSetRow> {
  return (await apiFetch<{ set: CalibrationSetRow }>('/api/calibration-sets', { method: 'POST', body: JSON.stringify(input) })).set;
}

// ---- API tokens (machine access: README.md, "Machine access") ----

const apiTokenSchema = z.object({
  id: z.string(),
  name: z.string(),
  roles: z.array(roleSchema),
  createdBy: z.string().nullable(),
  createdAt: z.string(),
  lastUsedAt: z.string().nullable(),
  revokedAt: z.string().nullable(),
});
export type ApiToken = z.infer<typeof apiTokenSchema>;

export const apiTokensQuery = queryOptions({
  queryKey: [...adminKeys.all, 'api-tokens'] as const,
  queryFn: async () => z.object({ tokens: z.array(apiTokenSchema) }).parse(await apiFetch('/api/admin/api-tokens')).tokens,
});

/** Issues a token; the answer carries its plaintext, shown once. */
export async function issueApiToken(input: { name: string; roles: Role[] }): Promise<{ token: string; apiToken: ApiToken }> {
  const body = await apiFetch('/api/admin/api-tokens', { method: 'POST', body: JSON.stringify(input) });
  return z.object({ token: z.string(), apiToken: apiTokenSchema }).parse(body);
}

export async function revokeApiToken(id: string): Promise<ApiToken> {
  const body = await apiFetch(`/api/admin/api-tokens/${encodeURIComponent(id)}`, { method: 'DELETE' });
  return z.object({ apiToken: apiTokenSchema }).parse(body).apiToken;
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
