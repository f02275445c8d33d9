import { queryOptions } from '@tanstack/react-query';
import {
  savedViewListSchema,
  savedViewSchema,
  scenarioPageSchema,
  scenarioSummarySchema,
  type SavedView,
  type ScenarioPage,
} from '@shared/api/scenarios.ts';
import { apiFetch } from '@/lib/api.ts';

export const scenarioKeys = {
  all: ['scenarios'] as const,
  summary: (query: string) => [...scenarioKeys.all, 'summary', query] as const,
  views: () => [...scenarioKeys.all, 'views'] as const,
  roles: () => [...scenarioKeys.all, 'roles'] as const,
};

/** One page of rows; the grid's datasource calls it directly (AG Grid owns the paging). */
export async function fetchScenarioPage(query: URLSearchParams): Promise<ScenarioPage> {
  return scenarioPageSchema.parse(await apiFetch(`/api/scenarios?${query}`));
}

export const scenarioSummaryQuery = (query: string) =>
  queryOptions({
    queryKey: scenarioKeys.summary(query),
    queryFn: async () => scenarioSummarySchema.parse(await apiFetch(`/api/scenarios/summary?${query}`)),
    placeholderData: (previous) => previous,
  });

export const savedViewsQuery = () =>
  queryOptions({
    queryKey: scenarioKeys.views(),
    queryFn: async () => savedViewListSchema.parse(await apiFetch('/api/scenario-views')).views,
  });

/** The signed-in person's roles, to offer the export only to those the permission table allows. */
export const myRolesQuery = () =>
  queryOptions({
    queryKey: scenarioKeys.roles(),
    queryFn: async () => (await apiFetch<{ roles: string[] }>('/api/me')).roles,
    staleTime: 60_000,
  });

export async function createSavedView(input: Pick<SavedView, 'name' | 'state'>): Promise<SavedView> {
  const body = await apiFetch<{ view: unknown }>('/api/scenario-views', { method: 'POST', body: JSON.stringify(input) });
  return savedViewSchema.parse(body.view);
}

export async function deleteSavedView(id: string): Promise<void> {
  await apiFetch(`/api/scenario-views/${encodeURIComponent(id)}`, { method: 'DELETE' });
}

export function exportUrl(format: 'xlsx' | 'csv', query: string): string {
  return `/api/scenarios/export.${format}?${query}`;
}
