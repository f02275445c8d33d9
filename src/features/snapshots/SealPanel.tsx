import { useMutation, useQuery, useQueryClient } from '@tanstack/react-query';
import { useState } from 'react';
import { Card } from '@/components/Page.tsx';
import { modelsQuery, sealSnapshot, snapshotKeys, type SnapshotFilters } from './api.ts';

const inputClass = 'mt-0.5 rounded border border-line bg-surface px-2 py-1 text-ink';
const list = (text: string) =>
  text
    .split(',')
    .map((s) => s.trim())
    .filter(Boolean);

/** Risk only: choose what to seal (default: the latest cycle of each model) and seal it. */
export function SealPanel() {
  const models = useQuery(modelsQuery);
  const queryClient = useQueryClient();
  const [modelText, setModelText] = useState('');
  const [regionText, setRegionText] = useState('');
  const [kind, setKind] = useState<'' | 'hydro' | 'solar'>('');
  const [dayFrom, setDayFrom] = useState('');
  const [dayTo, setDayTo] = useState('');
  const seal = useMutation({
    mutationFn: sealSnapshot,
    onSuccess: () => queryClient.invalidateQueries({ queryKey: snapshotKeys.all }),
  });
  const filters: SnapshotFilters = {
    ...(list(modelText).length ? { models: list(modelText) } : {}),
    ...(list(regionText).length ? { regionIds: list(regionText) } : {}),
    ...(kind ? { kind } : {}),
    ...(dayFrom ? { dayFrom } : {}),
    ...(dayTo ? { dayTo } : {}),
  };
  return (
    <Card title="Seal">
      <p className="mb-2 text-xs text-ink-muted">
        Freezes the published state: scenario rows and weighted P10/P50/P90, the latest published regime call, the runs with their input checksums, calibration set and code versions.
        Left empty, each model's latest cycle, every region and day.
      </p>
      <form
        className="flex flex-wrap items-end gap-3"
        onSubmit={(e) => {
          e.preventDefault();
          seal.mutate(filters);
        }}
      >
        <label className="flex flex-col text-xs text-ink-muted">
          Models (comma-separated)
          <input value={modelText} onChange={(e) => setModelText(e.target.value)} list="snapshot-models" placeholder="all" className={inputClass} />
          <datalist id="snapshot-models">
            {(models.data ?? []).map((m) => (
              <option key={m} value={m} />
            ))}
          </datalist>
        </label>
        <label className="flex flex-col text-xs text-ink-muted">
          Regions (ids, comma-separated)
          <input value={regionText} onChange={(e) => setRegionText(e.target.value)} placeholder="all" className={inputClass} />
        </label>
        <label className="flex flex-col text-xs text-ink-muted">
          Kind
          <select value={kind} onChange={(e) => setKind(e.target.value as typeof kind)} className={inputClass}>
            <option value="">hydro and solar</option>
            <option value="hydro">hydro catchments</option>
            <option value="solar">solar zones</option>
          </select>
        </label>
        <label className="flex flex-col text-xs text-ink-muted">
          First day (UTC)
          <input type="date" value={dayFrom} onChange={(e) => setDayFrom(e.target.value)} className={inputClass} />
        </label>
        <label className="flex flex-col text-xs text-ink-muted">
          Last day (UTC)
          <input type="date" value={dayTo} onChange={(e) => setDayTo(e.target.value)} className={inputClass} />
        </label>
        <button type="submit" disabled={seal.isPending} className="rounded bg-action px-3 py-1.5 font-medium text-white hover:bg-action-hover disabled:opacity-50">
          {seal.isPending ? 'Sealing…' : 'Seal snapshot'}
        </button>
      </form>
      {seal.isError ? (
        <p role="alert" className="mt-2 text-xs text-caution">
          {seal.error.message}
        </p>
      ) : null}
      {seal.isSuccess ? (
        <p role="status" className="mt-2 text-xs">
          Sealed snapshot #{seal.data.id}: {seal.data.summary.rowCount} rows from {seal.data.summary.runCount} run(s), hash{' '}
          <span className="num font-medium">{seal.data.shortHash}</span>
        </p>
      ) : null}
    </Card>
  );
}
