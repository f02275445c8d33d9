/**
 * The snapshots feature's HTTP layer. The response shapes below mirror server/services/snapshots.ts
 * (list items, verification with chain status); the sealed document and checks come from
 * shared/api/snapshots.ts, the audit trail from shared/api/auth.ts.
 */
import { queryOptions } from '@tanstack/react-query';
import { auditPageSchema, auditVerificationSchema, meSchema } from '@shared/api/auth.ts';
import { sealedSnapshotSchema, snapshotCheckSchema, snapshotPublicKeySchema, type SealedSnapshot, type SnapshotCheck } from '@shared/api/snapshots.ts';
import { apiFetch } from '@/lib/api.ts';

export interface SnapshotFilters {
  regionIds?: string[];
  kind?: 'hydro' | 'solar';
  dayFrom?: string;
  dayTo?: string;
  models?: string[];
  runIds?: string[];
}

export interface SnapshotSummary {
  filters: SnapshotFilters;
  models: string[];
  runCount: number;
  rowCount: number;
  regionCount: number;
  dayFrom: string | null;
  dayTo: string | null;
  regimeCall: { id: string; version: number } | null;
  trigger: 'manual' | 'after-publish';
  callId?: string;
}

export interface SnapshotListItem {
  id: number;
  sealedAt: string;
  sealedBy: string;
  sealedById: string | null;
  summary: SnapshotSummary;
  hash: string;
  shortHash: string;
  previousHash: string | null;
  keyId: string;
}

export interface ChainStatus {
  valid: boolean;
  checked: number;
  firstBroken: { id: number; shortHash: string; check: string; detail: string } | null;
}

export interface SnapshotVerifyResult {
  id: number;
  valid: boolean;
  checks: SnapshotCheck[];
  chain: ChainStatus;
}

export interface SnapshotListParams {
  from?: string;
  to?: string;
  user?: string;
  limit: number;
  offset: number;
}

export interface AuditParams {
  action?: string;
  actor?: string;
  from?: string;
  to?: string;
  limit: number;
  offset: number;
}

export const snapshotKeys = {
  all: ['snapshots'] as const,
  list: (p: SnapshotListParams) => [...snapshotKeys.all, 'list', p] as const,
  detail: (id: number) => [...snapshotKeys.all, 'detail', id] as const,
  chain: () => [...snapshotKeys.all, 'chain'] as const,
  publicKey: () => [...snapshotKeys.all, 'public-key'] as const,
  roles: () => [...snapshotKeys.all, 'roles'] as const,
  audit: (p: AuditParams) => [...snapshotKeys.all, 'audit', p] as const,
  auditVerify: () => [...snapshotKeys.all, 'audit-verify'] as const,
  models: () => [...snapshotKeys.all, 'models'] as const,
};

function query(params: Record<string, string | number | undefined>): string {
  const q = new URLSearchParams();
  for (const [k, v] of Object.entries(params)) if (v !== undefined && v !== '') q.set(k, String(v));
  const text = q.toString();
  return text ? `?${text}` : '';
}

/** The signed-in person's roles, to offer sealing only to those the permission table allows. */
export const rolesQuery = queryOptions({
  queryKey: snapshotKeys.roles(),
  queryFn: async () => meSchema.parse(await apiFetch('/api/me')).roles,
  staleTime: 60_000,
});

export const snapshotListQuery = (p: SnapshotListParams) =>
  queryOptions({
    queryKey: snapshotKeys.list(p),
    queryFn: () => apiFetch<{ snapshots: SnapshotListItem[]; total: number }>(`/api/snapshots${query({ ...p })}`),
  });

export const snapshotQuery = (id: number) =>
  queryOptions({
    queryKey: snapshotKeys.detail(id),
    queryFn: async () => {
      const body = await apiFetch<{ snapshot: SnapshotListItem & { document: unknown } }>(`/api/snapshots/${id}`);
      return { ...body.snapshot, document: sealedSnapshotSchema.parse(body.snapshot.document) as SealedSnapshot };
    },
    staleTime: Infinity,
  });

export const chainQuery = queryOptions({
  queryKey: snapshotKeys.chain(),
  queryFn: () => apiFetch<ChainStatus>('/api/snapshots/verify-chain'),
});

export const publicKeyQuery = queryOptions({
  queryKey: snapshotKeys.publicKey(),
  queryFn: async () => snapshotPublicKeySchema.parse(await apiFetch('/api/snapshots/public-key')),
  staleTime: Infinity,
});

/** Model names of uploaded runs, offered as choices in the seal filters. */
export const modelsQuery = queryOptions({
  queryKey: snapshotKeys.models(),
  queryFn: async () => {
    const { runs } = await apiFetch<{ runs: { model: string | null }[] }>('/api/runs');
    return [...new Set(runs.map((r) => r.model).filter((m): m is string => !!m))].sort();
  },
});

export const auditQuery = (p: AuditParams) =>
  queryOptions({
    queryKey: snapshotKeys.audit(p),
    queryFn: async () => auditPageSchema.parse(await apiFetch(`/api/audit${query({ ...p })}`)),
  });

export const auditVerifyQuery = queryOptions({
  queryKey: snapshotKeys.auditVerify(),
  queryFn: async () => auditVerificationSchema.parse(await apiFetch('/api/audit/verify')),
});

export async function verifySnapshot(id: number): Promise<SnapshotVerifyResult> {
  const body = await apiFetch<SnapshotVerifyResult>(`/api/snapshots/${id}/verify`);
  return { ...body, checks: body.checks.map((c) => snapshotCheckSchema.parse(c)) };
}

export async function sealSnapshot(filters: SnapshotFilters): Promise<SnapshotListItem> {
  const body = await apiFetch<{ snapshot: SnapshotListItem }>('/api/snapshots', { method: 'POST', body: JSON.stringify({ filters }) });
  return body.snapshot;
}

export const exportUrl = (id: number, format: 'json' | 'xlsx') => `/api/snapshots/${id}/export.${format}`;
