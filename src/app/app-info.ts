import { queryOptions } from '@tanstack/react-query';
import { appInfoSchema } from '@shared/api/app-info.ts';
import { apiFetch } from '@/lib/api.ts';

export const appInfoQuery = queryOptions({
  queryKey: ['app-info'],
  queryFn: async () => appInfoSchema.parse(await apiFetch('/api/app-info')),
  staleTime: Infinity,
});
