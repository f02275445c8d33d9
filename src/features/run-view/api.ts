import { queryOptions } from '@tanstack/react-query';
import { runSchema } from '@shared/api/runs.ts';
import { apiFetch } from '@/lib/api.ts';

export const runViewKeys = {
  run: (id: string) => ['run-view', id, 'run'] as const,
};

export const runViewQuery = (id: string) =>
  queryOptions({
    queryKey: runViewKeys.run(id),
    queryFn: async () => runSchema.parse((await apiFetch<{ run: unknown }>(`/api/runs/${encodeURIComponent(id)}`)).run),
    refetchInterval: (query) => {
      const state = query.state.data?.state;
      return state && state !== 'ready' && state !== 'rejected' ? 1500 : false;
    },
  });
