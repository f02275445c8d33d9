/** The regime-calls feature's HTTP layer: calls and their versions, regime names, runs and clusterings. */
import { queryOptions } from '@tanstack/react-query';
import { meSchema, type Me } from '@shared/api/auth.ts';
import { clusteringListSchema, clusteringResponseSchema, type ClusteringRequest } from '@shared/api/clusters.ts';
import {
  callPreviewSchema,
  regimeCallDetailSchema,
  regimeCallListSchema,
  regimeCallSchema,
  regimeNameListSchema,
  type CallDraft,
  type RegimeCall,
} from '@shared/api/regime-calls.ts';
import { runListSchema } from '@shared/api/runs.ts';
import { ApiError, apiFetch, setCsrfToken } from '@/lib/api.ts';

export const callKeys = {
  all: ['regime-calls'] as const,
  list: () => [...callKeys.all, 'list'] as const,
  detail: (id: string) => [...callKeys.all, 'detail', id] as const,
  preview: (id: string) => [...callKeys.all, 'preview', id] as const,
  names: () => ['regime-names'] as const,
  runs: () => ['runs', 'list'] as const,
  clusterings: (runId: string) => ['clusterings', 'run', runId] as const,
  clustering: (id: string) => ['clusterings', 'detail', id] as const,
};

/** The signed-in person (the same cache entry the sign-in gate fills), for role-dependent buttons. */
export const signedInQuery = queryOptions({
  queryKey: ['auth', 'me'],
  queryFn: async (): Promise<Me | null> => {
    try {
      const me = meSchema.parse(await apiFetch('/api/me'));
      setCsrfToken(me.csrfToken);
      return me;
    } catch (err) {
      if (err instanceof ApiError && err.status === 401) return null;
      throw err;
    }
  },
  staleTime: 60_000,
});

export const callListQuery = queryOptions({
  queryKey: callKeys.list(),
  queryFn: async () => regimeCallListSchema.parse(await apiFetch('/api/regime-calls')).calls,
});

export const callDetailQuery = (id: string) =>
  queryOptions({
    queryKey: callKeys.detail(id),
    queryFn: async () => regimeCallDetailSchema.parse(await apiFetch(`/api/regime-calls/${encodeURIComponent(id)}`)),
  });

export const callPreviewQuery = (id: string) =>
  queryOptions({
    queryKey: callKeys.preview(id),
    queryFn: async () => callPreviewSchema.parse(await apiFetch(`/api/regime-calls/${encodeURIComponent(id)}/preview`)),
  });

export const regimeNamesQuery = queryOptions({
  queryKey: callKeys.names(),
  queryFn: async () => regimeNameListSchema.parse(await apiFetch('/api/regime-names')).names,
  staleTime: 60_000,
});

export const runsQuery = queryOptions({
  queryKey: callKeys.runs(),
  queryFn: async () => runListSchema.parse(await apiFetch('/api/runs')).runs,
});

export const clusteringsQuery = (runId: string) =>
  queryOptions({
    queryKey: callKeys.clusterings(runId),
    queryFn: async () => clusteringListSchema.parse(await apiFetch(`/api/runs/${encodeURIComponent(runId)}/clusterings`)).clusterings,
  });

export const clusteringQuery = (id: string) =>
  queryOptions({
    queryKey: callKeys.clustering(id),
    queryFn: async () => clusteringResponseSchema.parse(await apiFetch(`/api/clusterings/${encodeURIComponent(id)}`)).clustering,
    staleTime: Infinity,
  });

const json = (body: unknown): RequestInit => ({ body: JSON.stringify(body) });

export async function createClustering(runId: string, request: ClusteringRequest) {
  const body = await apiFetch(`/api/runs/${encodeURIComponent(runId)}/clusterings`, { method: 'POST', ...json(request) });
  return clusteringResponseSchema.parse(body).clustering;
}

function parseCall(body: unknown): RegimeCall {
  return regimeCallSchema.parse((body as { call: unknown }).call);
}

export async function createCall(draft: CallDraft): Promise<RegimeCall> {
  return parseCall(await apiFetch('/api/regime-calls', { method: 'POST', ...json(draft) }));
}

export async function saveDraft(id: string, draft: CallDraft): Promise<RegimeCall> {
  return parseCall(await apiFetch(`/api/regime-calls/${encodeURIComponent(id)}`, { method: 'PUT', ...json(draft) }));
}

export async function deleteDraft(id: string): Promise<void> {
  await apiFetch(`/api/regime-calls/${encodeURIComponent(id)}`, { method: 'DELETE' });
}

export async function publishCall(id: string): Promise<{ call: RegimeCall; mails: number }> {
  const body = await apiFetch<{ call: unknown; mails: number }>(`/api/regime-calls/${encodeURIComponent(id)}/publish`, { method: 'POST' });
  return { call: parseCall(body), mails: body.mails };
}

export async function startCorrection(id: string, reason: string): Promise<RegimeCall> {
  return parseCall(await apiFetch(`/api/regime-calls/${encodeURIComponent(id)}/corrections`, { method: 'POST', ...json({ reason }) }));
}
