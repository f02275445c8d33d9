import { useMutation, useQuery } from '@tanstack/react-query';
import { Fragment, useState } from 'react';
import { Card, EmptyState } from '@/components/Page.tsx';
import { exportUrl, snapshotListQuery, verifySnapshot, type SnapshotListItem, type SnapshotVerifyResult } from './api.ts';
import { formatUtc } from './units.ts';
import { Pager } from './Pager.tsx';

const PAGE = 20;
const inputClass = 'mt-0.5 rounded border border-line bg-surface px-2 py-1 text-ink';

function whatText(s: SnapshotListItem['summary']): string {
  const days = s.dayFrom ? (s.dayFrom === s.dayTo ? s.dayFrom : `${s.dayFrom} to ${s.dayTo}`) : 'no days';
  const call = s.regimeCall ? `call v${s.regimeCall.version}` : 'no published call';
  return `${s.models.join(', ') || '–'} · ${s.runCount} run(s) · ${s.regionCount} region(s) · ${days} · ${s.rowCount} rows · ${call}`;
}

function StatusBadge({ ok, skipped }: { ok: boolean; skipped?: boolean }) {
  const cls = skipped ? 'bg-surface-sunken text-ink-muted' : ok ? 'bg-ascent-soft text-ascent-strong' : 'bg-caution-soft text-caution';
  return <span className={`num inline-block w-10 rounded px-1 text-center text-2xs font-semibold ${cls}`}>{skipped ? 'skip' : ok ? 'ok' : 'FAIL'}</span>;
}

function VerifyResult({ result }: { result: SnapshotVerifyResult }) {
  return (
    <div className="flex flex-col gap-1 py-1" role="status">
      <p className="font-medium">{result.valid ? 'This snapshot verifies.' : 'This snapshot does NOT verify.'}</p>
      <ul className="flex flex-col gap-0.5">
        {result.checks.map((c) => (
          <li key={c.name} className="flex gap-2">
            <StatusBadge ok={c.ok} skipped={c.skipped} />
            <span className="num w-28 shrink-0">{c.name}</span>
            <span className="text-ink-muted">{c.detail}</span>
          </li>
        ))}
        <li className="flex gap-2">
          <StatusBadge ok={result.chain.valid} />
          <span className="num w-28 shrink-0">chain so far</span>
          <span className="text-ink-muted">
            {result.chain.valid
              ? `all ${result.chain.checked} snapshot(s) up to this one verify and link`
              : `first broken: snapshot #${result.chain.firstBroken?.id} (${result.chain.firstBroken?.check}): ${result.chain.firstBroken?.detail}`}
          </span>
        </li>
      </ul>
    </div>
  );
}

function SnapshotRow({ s, picked, onPick }: { s: SnapshotListItem; picked: boolean; onPick: () => void }) {
  const verify = useMutation({ mutationFn: () => verifySnapshot(s.id) });
  return (
    <Fragment>
      <tr className="border-b border-line hover:bg-surface-sunken">
        <td className="px-2 py-1.5">
          <input type="checkbox" checked={picked} onChange={onPick} aria-label={`Compare snapshot ${s.id}`} />
        </td>
        <td className="num px-2 py-1.5">#{s.id}</td>
        <td className="num px-2 py-1.5">{formatUtc(s.sealedAt)}</td>
        <td className="px-2 py-1.5">{s.sealedBy}</td>
        <td className="px-2 py-1.5 text-ink-muted">{whatText(s.summary)}</td>
        <td className="num px-2 py-1.5" title={s.hash}>
          {s.shortHash}
        </td>
        <td className="whitespace-nowrap px-2 py-1.5 text-right">
          <button type="button" onClick={() => verify.mutate()} disabled={verify.isPending} className="rounded border border-line px-2 py-0.5 hover:bg-surface-sunken disabled:opacity-50">
            {verify.isPending ? 'Verifying…' : 'Verify'}
          </button>{' '}
          <a href={exportUrl(s.id, 'json')} className="text-action hover:underline" download>
            JSON
          </a>{' '}
          <a href={exportUrl(s.id, 'xlsx')} className="text-action hover:underline" download>
            xlsx
          </a>
        </td>
      </tr>
      {verify.data || verify.isError ? (
        <tr className="border-b border-line">
          <td />
          <td colSpan={6} className="px-2 pb-2 text-xs">
            {verify.isError ? <p role="alert" className="text-caution">{verify.error.message}</p> : <VerifyResult result={verify.data!} />}
          </td>
        </tr>
      ) : null}
    </Fragment>
  );
}

/** The sealed snapshots, newest first: who, when, what, short hash; verify, export, pick two to compare. */
export function SnapshotList({ picked, onPick }: { picked: number[]; onPick: (id: number) => void }) {
  const [from, setFrom] = useState('');
  const [to, setTo] = useState('');
  const [user, setUser] = useState('');
  const [offset, setOffset] = useState(0);
  const list = useQuery(snapshotListQuery({ from: from || undefined, to: to || undefined, user: user.trim() || undefined, limit: PAGE, offset }));
  const total = list.data?.total ?? 0;
  const filtered = Boolean(from || to || user.trim());
  return (
    <Card title="Sealed snapshots">
      <div className="mb-2 flex flex-wrap items-end gap-3">
        <label className="flex flex-col text-xs text-ink-muted">
          Sealed from (UTC day)
          <input type="date" value={from} onChange={(e) => (setFrom(e.target.value), setOffset(0))} className={inputClass} />
        </label>
        <label className="flex flex-col text-xs text-ink-muted">
          Sealed to (UTC day)
          <input type="date" value={to} onChange={(e) => (setTo(e.target.value), setOffset(0))} className={inputClass} />
        </label>
        <label className="flex flex-col text-xs text-ink-muted">
          Sealed by
          <input value={user} onChange={(e) => (setUser(e.target.value), setOffset(0))} placeholder="name" className={inputClass} />
        </label>
        <p className="ml-auto text-xs text-ink-muted">Tick two snapshots to compare their rows.</p>
      </div>
      {list.isError ? (
        <p role="alert" className="text-caution">
          The snapshots could not be loaded: {list.error.message}
        </p>
      ) : list.isPending ? (
        <p className="text-ink-muted">Loading…</p>
      ) : list.data.snapshots.length === 0 ? (
        <EmptyState icon="seal" title={filtered ? 'No snapshot matches these filters' : 'No snapshots sealed'}>
          {filtered ? 'Widen the dates or clear the name.' : 'A risk manager seals what was published with the Seal panel; each snapshot is listed here with its short hash.'}
        </EmptyState>
      ) : (
        <>
          <div className="overflow-x-auto">
            <table className="w-full text-left text-xs">
              <thead className="border-b border-line text-2xs uppercase tracking-wide text-ink-muted">
                <tr>
                  <th className="px-2 py-1 font-medium" aria-label="Compare" />
                  <th className="px-2 py-1 font-medium">Id</th>
                  <th className="px-2 py-1 font-medium">Sealed at</th>
                  <th className="px-2 py-1 font-medium">By</th>
                  <th className="px-2 py-1 font-medium">What</th>
                  <th className="px-2 py-1 font-medium">Hash</th>
                  <th className="px-2 py-1 text-right font-medium">Actions</th>
                </tr>
              </thead>
              <tbody>
                {list.data.snapshots.map((s) => (
                  <SnapshotRow key={s.id} s={s} picked={picked.includes(s.id)} onPick={() => onPick(s.id)} />
                ))}
              </tbody>
            </table>
          </div>
          <Pager offset={offset} pageSize={PAGE} total={total} onChange={setOffset} />
        </>
      )}
    </Card>
  );
}
