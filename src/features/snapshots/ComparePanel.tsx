import { useQuery } from '@tanstack/react-query';
import { Card, EmptyState } from '@/components/Page.tsx';
import { snapshotQuery } from './api.ts';
import { compareSnapshots, rowsOf, type ComparedField, type RowDiff } from './compare.ts';
import { changeClass, FIELD_VIEWS, formatUtc } from './units.ts';

const SHOWN = 200;

function ChangeCell({ diff }: { diff: RowDiff }) {
  return (
    <ul className="flex flex-col">
      {diff.changes.map((c) => {
        if (c.field === 'cycle') {
          return (
            <li key="cycle" className="num">
              cycle {c.before ? formatUtc(String(c.before)) : '–'} → {c.after ? formatUtc(String(c.after)) : '–'}
            </li>
          );
        }
        const field = c.field as ComparedField;
        const view = FIELD_VIEWS[field];
        const before = c.before as number | null;
        const after = c.after as number | null;
        const change = before !== null && after !== null ? after - before : null;
        return (
          <li key={field} className="num">
            <span className="text-ink-muted">{view.label}</span> {view.value(before)} → {view.value(after)}
            {change !== null ? <span className={`ml-1 ${changeClass(field, change)}`}>({view.change(change)})</span> : null}
          </li>
        );
      })}
    </ul>
  );
}

/** Rows added, removed and changed (with the changed values) from the older to the newer of two snapshots. */
export function ComparePanel({ ids }: { ids: [number, number] }) {
  const [older, newer] = [...ids].sort((a, b) => a - b);
  const a = useQuery(snapshotQuery(older));
  const b = useQuery(snapshotQuery(newer));
  const title = `Comparison: #${older} → #${newer}`;
  if (a.isError || b.isError) {
    return (
      <Card title={title}>
        <p role="alert" className="text-caution">
          {(a.error ?? b.error)?.message}
        </p>
      </Card>
    );
  }
  if (!a.data || !b.data) return <Card title={title}>Loading both sealed documents…</Card>;
  const diff = compareSnapshots(rowsOf(a.data.document.content), rowsOf(b.data.document.content));
  return (
    <Card title={title}>
      <p className="mb-2 text-xs text-ink-muted">
        Rows matched by model, member, region and day. <span className="num">{diff.added}</span> added, <span className="num">{diff.removed}</span> removed,{' '}
        <span className="num">{diff.changed}</span> changed, <span className="num">{diff.unchanged}</span> unchanged. Teal: wetter or cloudier; amber: drier or sunnier.
      </p>
      {diff.rows.length === 0 ? (
        <EmptyState icon="seal" title="No row changed">
          Both snapshots hold the same scenario rows with the same values and weights.
        </EmptyState>
      ) : (
        <div className="max-h-96 overflow-auto">
          <table className="w-full text-left text-xs">
            <thead className="sticky top-0 border-b border-line bg-surface-raised text-2xs uppercase tracking-wide text-ink-muted">
              <tr>
                <th className="px-2 py-1 font-medium">Change</th>
                <th className="px-2 py-1 font-medium">Model</th>
                <th className="px-2 py-1 text-right font-medium">Member</th>
                <th className="px-2 py-1 font-medium">Region</th>
                <th className="px-2 py-1 font-medium">Day (UTC)</th>
                <th className="px-2 py-1 font-medium">Values</th>
              </tr>
            </thead>
            <tbody>
              {diff.rows.slice(0, SHOWN).map((r) => (
                <tr key={r.key} className="border-b border-line align-top">
                  <td className={`px-2 py-1 font-medium ${r.kind === 'removed' ? 'text-caution' : r.kind === 'added' ? 'text-action' : ''}`}>{r.kind}</td>
                  <td className="px-2 py-1">{r.model ?? '–'}</td>
                  <td className="num px-2 py-1 text-right">{r.member}</td>
                  <td className="px-2 py-1">{r.regionId}</td>
                  <td className="num px-2 py-1">{r.day}</td>
                  <td className="px-2 py-1">
                    <ChangeCell diff={r} />
                  </td>
                </tr>
              ))}
            </tbody>
          </table>
          {diff.rows.length > SHOWN ? <p className="mt-1 text-xs text-ink-muted">First {SHOWN} of {diff.rows.length} differing rows shown; export both snapshots for the rest.</p> : null}
        </div>
      )}
    </Card>
  );
}
