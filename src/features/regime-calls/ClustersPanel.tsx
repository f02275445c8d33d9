import { useMutation, useQuery, useQueryClient } from '@tanstack/react-query';
import { useState } from 'react';
import { CLUSTER_K_MAX, CLUSTER_K_MIN, type ClusteringDetail } from '@shared/api/clusters.ts';
import { canCall } from '@shared/permissions.ts';
import { Card } from '@/components/Page.tsx';
import { formatCycle } from '@/lib/format.ts';
import { ClusterMap } from './ClusterMap.tsx';
import { callKeys, clusteringQuery, clusteringsQuery, createClustering, runsQuery, signedInQuery } from './api.ts';

/** Scenario clusters of a ready ensemble run: k chooser with the silhouette, cluster maps and member lists. */
export function ClustersPanel({ clusteringId, onSelect }: { clusteringId: string | null; onSelect: (id: string | null) => void }) {
  const runs = useQuery(runsQuery);
  const me = useQuery(signedInQuery);
  const ensembles = (runs.data ?? []).filter((r) => r.isEnsemble && r.state === 'ready');
  const [chosenRunId, setRunId] = useState<string>('');
  const [k, setK] = useState(3);
  const [step, setStep] = useState<number | ''>('');
  const current = useQuery({ ...clusteringQuery(clusteringId ?? ''), enabled: !!clusteringId });
  // Until someone picks a run: the selected clustering's run, else the newest ensemble.
  const runId = chosenRunId || current.data?.runId || ensembles[0]?.id || '';
  const run = ensembles.find((r) => r.id === runId);
  const list = useQuery({ ...clusteringsQuery(runId), enabled: !!runId });
  const queryClient = useQueryClient();
  const create = useMutation({
    mutationFn: () => createClustering(runId, { k, ...(step === '' ? {} : { step }) }),
    onSuccess: (c) => {
      queryClient.setQueryData(callKeys.clustering(c.id), c);
      void queryClient.invalidateQueries({ queryKey: callKeys.clusterings(runId) });
      onSelect(c.id);
    },
  });
  const mayCluster = canCall('POST', '/api/runs/:id/clusterings', me.data?.roles ?? null);

  return (
    <Card title="Scenario clusters (500 hPa)">
      {ensembles.length === 0 ? (
        <p className="text-ink-muted">No ensemble run is ready yet: upload one on the Runs screen to group its members into scenarios.</p>
      ) : (
        <div className="flex flex-col gap-3">
          <div className="flex flex-wrap items-end gap-2 text-xs text-ink-muted">
            <label className="flex flex-col">
              Ensemble run
              <select value={runId} onChange={(e) => setRunId(e.target.value)} className="mt-0.5 rounded border border-line bg-surface px-2 py-1 text-ink">
                {ensembles.map((r) => (
                  <option key={r.id} value={r.id}>
                    {r.model ?? r.fileName} {r.cycle ? formatCycle(r.cycle) : ''} ({r.members?.length ?? 0} members)
                  </option>
                ))}
              </select>
            </label>
            <label className="flex flex-col">
              Step
              <select value={step} onChange={(e) => setStep(e.target.value === '' ? '' : Number(e.target.value))} className="mt-0.5 rounded border border-line bg-surface px-2 py-1 text-ink">
                <option value="">middle</option>
                {(run?.steps ?? []).map((s) => (
                  <option key={s} value={s}>
                    +{s} h
                  </option>
                ))}
              </select>
            </label>
            <label className="flex flex-col">
              Clusters k
              <select value={k} onChange={(e) => setK(Number(e.target.value))} className="mt-0.5 rounded border border-line bg-surface px-2 py-1 text-ink">
                {Array.from({ length: CLUSTER_K_MAX - CLUSTER_K_MIN + 1 }, (_, i) => CLUSTER_K_MIN + i).map((n) => (
                  <option key={n} value={n}>
                    {n}
                  </option>
                ))}
              </select>
            </label>
            {mayCluster ? (
              <button type="button" disabled={!runId || create.isPending} onClick={() => create.mutate()} className="rounded bg-action px-3 py-1 text-white hover:bg-action-hover disabled:opacity-50">
                {create.isPending ? 'Clustering…' : 'Cluster'}
              </button>
            ) : null}
          </div>
          {create.isError ? (
            <p role="alert" className="text-caution">
              {create.error.message}
            </p>
          ) : null}
          {list.data?.length ? (
            <table className="w-full text-left text-xs">
              <thead className="text-2xs uppercase tracking-wide text-ink-muted">
                <tr>
                  <th className="font-medium">Step</th>
                  <th className="font-medium">k</th>
                  <th className="font-medium">Silhouette</th>
                  <th className="font-medium">Sizes</th>
                </tr>
              </thead>
              <tbody>
                {list.data.map((c) => (
                  <tr key={c.id} className={`cursor-pointer border-t border-line ${c.id === clusteringId ? 'bg-action-soft/40' : 'hover:bg-surface-sunken'}`} onClick={() => onSelect(c.id)}>
                    <td className="num">+{c.step} h</td>
                    <td className="num">{c.k}</td>
                    <td className="num">{c.silhouette.toFixed(2)}</td>
                    <td className="num">{c.clusters.map((x) => x.size).join(' / ')}</td>
                  </tr>
                ))}
              </tbody>
            </table>
          ) : (
            <p className="text-ink-muted">No clustering of this run yet.</p>
          )}
          {current.data ? <ClusteringMaps clustering={current.data} /> : null}
        </div>
      )}
    </Card>
  );
}

function ClusteringMaps({ clustering }: { clustering: ClusteringDetail }) {
  const values = clustering.meanFields.fields.flat().filter((v): v is number => v !== null);
  const min = Math.min(...values);
  const max = Math.max(...values);
  return (
    <div>
      <p className="mb-2 text-xs text-ink-muted">
        +{clustering.step} h, k = {clustering.k}, silhouette <span className="num">{clustering.silhouette.toFixed(2)}</span> (−1 to 1; Rousseeuw's rule of thumb: above 0.5 a reasonable grouping, below 0.25 no substantial one), leading EOFs explain{' '}
        <span className="num">{clustering.explainedVariance.map((v) => `${(v * 100).toFixed(0)} %`).join(', ')}</span> of the spread. Mean 500 hPa height per cluster, dam.
      </p>
      <div className="grid gap-2 md:grid-cols-2 xl:grid-cols-3">
        {clustering.clusters.map((c) => (
          <div key={c.id}>
            <ClusterMap fields={clustering.meanFields} index={c.id} min={min} max={max} title={`Cluster ${c.id + 1}: ${c.size} members`} />
            <p className="num text-2xs text-ink-muted">members {c.members.join(', ')}</p>
          </div>
        ))}
      </div>
    </div>
  );
}
