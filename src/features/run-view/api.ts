import { queryOptions } from '@tanstack/react-query';
import { z } from 'zod';
import { meSchema, type Me } from '@shared/api/auth.ts';
import { runSchema } from '@shared/api/runs.ts';
import {
  diagnosticsSchema,
  omegaMapSchema,
  runMembersSchema,
  sectionSchema,
  type OmegaPartName,
} from '@shared/api/run-view.ts';
import { runSignalsSchema, type SignalRow } from '@shared/api/signals.ts';
import { ApiError, apiFetch } from '@/lib/api.ts';

export type MemberChoice = number | 'mean';

export const runViewKeys = {
  run: (id: string) => ['run-view', id, 'run'] as const,
  diagnostics: (id: string, member: MemberChoice) => ['run-view', id, 'diagnostics', member] as const,
  omega: (id: string, q: OmegaParams) => ['run-view', id, 'omega', q] as const,
  section: (id: string, q: SectionParams) => ['run-view', id, 'section', q] as const,
  members: (id: string) => ['run-view', id, 'members'] as const,
  signals: (id: string) => ['run-view', id, 'signals'] as const,
  regions: () => ['run-view', 'regions'] as const,
  me: () => ['run-view', 'me'] as const,
};

const enc = encodeURIComponent;

export const runViewQuery = (id: string) =>
  queryOptions({
    queryKey: runViewKeys.run(id),
    queryFn: async () => runSchema.parse((await apiFetch<{ run: unknown }>(`/api/runs/${enc(id)}`)).run),
    refetchInterval: (query) => {
      const state = query.state.data?.state;
      return state && state !== 'ready' && state !== 'rejected' ? 1500 : false;
    },
  });

export const diagnosticsQuery = (id: string, member: MemberChoice) =>
  queryOptions({
    queryKey: runViewKeys.diagnostics(id, member),
    queryFn: async () => diagnosticsSchema.parse(await apiFetch(`/api/runs/${enc(id)}/diagnostics?member=${member}`)),
    staleTime: 5 * 60_000,
  });

export interface OmegaParams {
  member: MemberChoice;
  step: number;
  level: number;
  part: OmegaPartName;
}

export function omegaUrl(id: string, q: OmegaParams): string {
  return `/api/runs/${enc(id)}/omega?member=${q.member}&step=${q.step}&level=${q.level}&part=${q.part}`;
}

export const omegaQuery = (id: string, q: OmegaParams) =>
  queryOptions({
    queryKey: runViewKeys.omega(id, q),
    queryFn: async () => omegaMapSchema.parse(await apiFetch(omegaUrl(id, q))),
    staleTime: 5 * 60_000,
  });

export interface SectionParams {
  member: MemberChoice;
  step: number;
  part: OmegaPartName;
  from: { lat: number; lon: number };
  to: { lat: number; lon: number };
  points: number;
}

export function sectionUrl(id: string, q: SectionParams): string {
  const p = (x: { lat: number; lon: number }) => `${x.lat},${x.lon}`;
  return `/api/runs/${enc(id)}/section?member=${q.member}&step=${q.step}&part=${q.part}&from=${enc(p(q.from))}&to=${enc(p(q.to))}&points=${q.points}`;
}

export const sectionQuery = (id: string, q: SectionParams) =>
  queryOptions({
    queryKey: runViewKeys.section(id, q),
    queryFn: async () => sectionSchema.parse(await apiFetch(sectionUrl(id, q))),
    staleTime: 5 * 60_000,
  });

export const membersQuery = (id: string) =>
  queryOptions({
    queryKey: runViewKeys.members(id),
    queryFn: async () => runMembersSchema.parse(await apiFetch(`/api/runs/${enc(id)}/members`)).members,
    refetchInterval: (query) => (query.state.data?.some((m) => m.state !== 'done' && m.state !== 'failed') ? 2000 : false),
  });

export function retryMember(id: string, member: number): Promise<unknown> {
  return apiFetch(`/api/runs/${enc(id)}/members/${member}/retry`, { method: 'POST' });
}

/** The signed-in person's roles, read here so this screen needs nothing from the auth feature. */
export const runViewMeQuery = queryOptions({
  queryKey: runViewKeys.me(),
  queryFn: async (): Promise<Me | null> => {
    try {
      return meSchema.parse(await apiFetch('/api/me'));
    } catch (err) {
      if (err instanceof ApiError && err.status === 401) return null;
      throw err;
    }
  },
  staleTime: 60_000,
});

const regionSchema = z.object({
  id: z.string(),
  name: z.string(),
  kind: z.string(),
  geometry: z.object({ type: z.string(), coordinates: z.unknown() }).nullable().optional(),
});
export type RegionOutline = z.infer<typeof regionSchema>;

/** Regions for outlines and names; an absent endpoint (404) is the same as no regions. */
export const regionsQuery = queryOptions({
  queryKey: runViewKeys.regions(),
  queryFn: async (): Promise<RegionOutline[]> => {
    try {
      return z.object({ regions: z.array(regionSchema) }).parse(await apiFetch('/api/regions')).regions;
    } catch (err) {
      if (err instanceof ApiError && err.status === 404) return [];
      throw err;
    }
  },
  staleTime: 10 * 60_000,
  retry: false,
});

/** The run's regional daily signals; null when the server has none for it (404). */
export const signalsQuery = (id: string) =>
  queryOptions({
    queryKey: runViewKeys.signals(id),
    queryFn: async (): Promise<SignalRow[] | null> => {
      try {
        return runSignalsSchema.parse(await apiFetch(`/api/runs/${enc(id)}/signals`)).rows;
      } catch (err) {
        if (err instanceof ApiError && err.status === 404) return null;
        throw err;
      }
    },
    staleTime: 5 * 60_000,
    retry: false,
  });
