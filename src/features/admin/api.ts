/** The admin feature's HTTP layer (role mapping part). */
import { queryOptions } from '@tanstack/react-query';
import { roleMappingsSchema, type RoleMapping } from '@shared/api/auth.ts';
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
