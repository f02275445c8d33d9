import { useEffect, useState, type FormEvent } from 'react';
import { normaliseCycle, type FilterParam } from './filters.ts';

const FIELDS: Array<{ key: FilterParam; label: string; placeholder?: string; type?: string; width: string }> = [
  { key: 'regions', label: 'Regions', placeholder: 'ids, comma-separated', width: 'w-44' },
  { key: 'from', label: 'From (UTC)', type: 'date', width: 'w-36' },
  { key: 'to', label: 'To (UTC)', type: 'date', width: 'w-36' },
  { key: 'model', label: 'Model', placeholder: 'latest of each', width: 'w-28' },
  { key: 'cycle', label: 'Cycle (UTC)', placeholder: '2026-12-01 00Z', width: 'w-44' },
  { key: 'members', label: 'Members', placeholder: 'e.g. 1,2,5', width: 'w-28' },
  { key: 'clustering', label: 'Clustering id', placeholder: 'optional', width: 'w-40' },
  { key: 'clusters', label: 'Clusters', placeholder: 'e.g. 0,2', width: 'w-20' },
];

/**
 * The screen's filters, written to the URL on Apply (the quick filter as you type): the grid,
 * summary, chart and exports all read them from there.
 */
/** What the bar's key is made of: every filter it owns except the quick filter (typing must not remount it). */
export function filterBarKey(search: URLSearchParams): string {
  return [...FIELDS.map((f) => f.key), 'kind'].map((k) => search.get(k) ?? '').join('|');
}

export function FilterBar({ search, onChange }: { search: URLSearchParams; onChange: (next: Record<string, string>) => void }) {
  const initial = () => Object.fromEntries([...FIELDS.map((f) => f.key), 'kind'].map((k) => [k, search.get(k) ?? '']));
  const [draft, setDraft] = useState<Record<string, string>>(initial);
  const [quick, setQuick] = useState(search.get('q') ?? '');
  // The page remounts this bar (key) when a view or link changes the filters, so drafts start from the URL.
  const searchText = search.toString();
  useEffect(() => {
    const current = new URLSearchParams(searchText).get('q') ?? '';
    if (quick === current) return;
    const timer = setTimeout(() => onChange({ q: quick }), 300);
    return () => clearTimeout(timer);
  }, [quick, searchText, onChange]);

  const submit = (e: FormEvent) => {
    e.preventDefault();
    const next = { ...draft };
    if (next.cycle) next.cycle = normaliseCycle(next.cycle);
    onChange(next);
  };
  return (
    <form onSubmit={submit} className="flex flex-wrap items-end gap-2 rounded-md border border-line bg-surface-raised p-2 text-xs">
      <label className="flex flex-col gap-0.5">
        <span className="text-2xs uppercase tracking-wide text-ink-muted">Quick filter</span>
        <input
          className="w-40 rounded border border-line bg-surface px-2 py-1"
          placeholder="region or model"
          value={quick}
          onChange={(e) => setQuick(e.target.value)}
        />
      </label>
      <label className="flex flex-col gap-0.5">
        <span className="text-2xs uppercase tracking-wide text-ink-muted">Kind</span>
        <select className="rounded border border-line bg-surface px-2 py-1" value={draft.kind} onChange={(e) => setDraft({ ...draft, kind: e.target.value })}>
          <option value="">hydro and solar</option>
          <option value="hydro">hydro catchments</option>
          <option value="solar">solar zones</option>
        </select>
      </label>
      {FIELDS.map((f) => (
        <label key={f.key} className="flex flex-col gap-0.5">
          <span className="text-2xs uppercase tracking-wide text-ink-muted">{f.label}</span>
          <input
            type={f.type ?? 'text'}
            className={`${f.width} num rounded border border-line bg-surface px-2 py-1`}
            placeholder={f.placeholder}
            value={draft[f.key]}
            onChange={(e) => setDraft({ ...draft, [f.key]: e.target.value })}
          />
        </label>
      ))}
      <button type="submit" className="rounded bg-action px-3 py-1 font-medium text-white hover:bg-action-hover">
        Apply
      </button>
      <button
        type="button"
        className="rounded border border-line px-3 py-1 hover:bg-surface-sunken"
        onClick={() => onChange(Object.fromEntries([...FIELDS.map((f) => f.key), 'kind', 'q'].map((k) => [k, ''])))}
      >
        Clear
      </button>
    </form>
  );
}
