/** The admin feature's HTTP layer (role mapping part). */
import { queryOptions } from '@tanstack/react-query';
import { z } from 'zod';
import { roleMappingsSchema, type RoleMapping } from '@shared/api/auth.ts';
import { roleSchema, type Role } from '@shared/roles.ts';
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

// ---- API tokens (machine access: docs/machine-access.md) ----

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
