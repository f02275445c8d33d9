import { useMutation, useQuery, useQueryClient } from '@tanstack/react-query';
import { useSearchParams } from 'react-router-dom';
import type { RegimeCall } from '@shared/api/regime-calls.ts';
import { canCall } from '@shared/permissions.ts';
import { EmptyState, PageHeader } from '@/components/Page.tsx';
import { CallEditor } from './CallEditor.tsx';
import { CallView } from './CallView.tsx';
import { ClustersPanel } from './ClustersPanel.tsx';
import { callDetailQuery, callKeys, callListQuery, createCall, signedInQuery } from './api.ts';

const today = () => new Date().toISOString().slice(0, 10);
const plusDays = (d: string, n: number) => new Date(Date.parse(d) + n * 86_400_000).toISOString().slice(0, 10);

/** Calls newest first, one line per series (its latest version), drafts marked. */
function seriesHeads(calls: RegimeCall[]): RegimeCall[] {
  const heads = new Map<string, RegimeCall>();
  for (const c of calls) {
    const h = heads.get(c.seriesId);
    if (!h || c.version > h.version) heads.set(c.seriesId, c);
  }
  return [...heads.values()].sort((a, b) => (b.publishedAt ?? b.createdAt).localeCompare(a.publishedAt ?? a.createdAt));
}

export function RegimeCallsPage() {
  const [params, setParams] = useSearchParams();
  const selected = params.get('call');
  const clusteringId = params.get('clustering');
  const set = (key: string, value: string | null) =>
    setParams((p) => {
      const next = new URLSearchParams(p);
      if (value) next.set(key, value);
      else next.delete(key);
      return next;
    });
  const list = useQuery(callListQuery);
  const me = useQuery(signedInQuery);
  const detail = useQuery({ ...callDetailQuery(selected ?? ''), enabled: !!selected });
  const queryClient = useQueryClient();
  const mayWrite = canCall('POST', '/api/regime-calls', me.data?.roles ?? null);
  const create = useMutation({
    mutationFn: () => createCall({ validFrom: plusDays(today(), 1), validTo: plusDays(today(), 3) }),
    onSuccess: (call) => {
      void queryClient.invalidateQueries({ queryKey: callKeys.list() });
      set('call', call.id);
    },
  });
  const heads = seriesHeads(list.data ?? []);

  return (
    <div className="flex flex-col gap-4">
      <PageHeader
        title="Regime calls"
        subtitle="The desk's morning call: regime, confidence, valid period, cluster weights and narrative."
        actions={
          mayWrite ? (
            <button type="button" onClick={() => create.mutate()} disabled={create.isPending} className="rounded bg-action px-3 py-1 text-white hover:bg-action-hover disabled:opacity-50">
              New call
            </button>
          ) : null
        }
      />
      {create.isError ? <p role="alert" className="text-caution">{create.error.message}</p> : null}
      <div className="grid gap-4 lg:grid-cols-[18rem_1fr]">
        <nav aria-label="Regime calls" className="flex flex-col gap-1">
          {list.isPending ? <p className="text-ink-muted">Loading…</p> : null}
          {list.isError ? <p role="alert" className="text-caution">{list.error.message}</p> : null}
          {list.data && heads.length === 0 ? (
            <EmptyState icon="call" title="No regime calls published">
              {mayWrite ? 'Start one with New call.' : 'Published calls and their earlier versions will be listed here, newest first.'}
            </EmptyState>
          ) : null}
          {heads.map((c) => (
            <button
              key={c.id}
              type="button"
              onClick={() => set('call', c.id)}
              className={`rounded border px-2 py-1 text-left text-xs ${c.seriesId === detail.data?.call.seriesId ? 'border-action bg-action-soft/30' : 'border-line hover:bg-surface-sunken'}`}
            >
              <div className="num font-medium">
                {c.validFrom} to {c.validTo}
              </div>
              <div className="text-ink-muted">
                v{c.version} · {c.state === 'draft' ? 'draft' : `published ${c.publishedAt ? new Date(c.publishedAt).toLocaleDateString() : ''}`} · {c.confidence} · {c.authorName ?? ''}
              </div>
            </button>
          ))}
        </nav>
        <div>
          {!selected ? (
            <EmptyState icon="call" title="Choose a call">
              Open a call on the left to read it (every version stays readable) or edit a draft.
            </EmptyState>
          ) : detail.isPending ? (
            <p className="text-ink-muted">Loading…</p>
          ) : detail.isError ? (
            <p role="alert" className="text-caution">
              {detail.error.message}
            </p>
          ) : detail.data.call.state === 'draft' && mayWrite ? (
            <CallEditor key={detail.data.call.id} call={detail.data.call} selectedClusteringId={clusteringId} onGone={() => set('call', null)} />
          ) : (
            <CallView detail={detail.data} onOpen={(id) => set('call', id)} />
          )}
        </div>
      </div>
      <ClustersPanel clusteringId={clusteringId} onSelect={(id) => set('clustering', id)} />
    </div>
  );
}
