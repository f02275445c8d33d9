import { useQuery } from '@tanstack/react-query';
import { useState } from 'react';
import { Card, EmptyState } from '@/components/Page.tsx';
import { auditQuery, auditVerifyQuery, chainQuery } from './api.ts';
import { formatUtc } from './units.ts';
import { Pager } from './Pager.tsx';

const PAGE = 25;
const inputClass = 'mt-0.5 rounded border border-line bg-surface px-2 py-1 text-ink';
const ACTIONS = ['', 'snapshot.seal', 'snapshot.export', 'run.upload', 'run.member_retry', 'role_mapping.replace', 'auth.sign_in', 'auth.sign_in_failed', 'auth.sign_out'];

function Verdict({ ok, text, onAgain, busy }: { ok: boolean | null; text: string; onAgain: () => void; busy: boolean }) {
  const cls = ok === null ? 'text-ink-muted' : ok ? 'text-ascent-strong dark:text-ascent-mid' : 'text-caution';
  return (
    <div className="flex items-center gap-2 text-xs">
      <span className={`font-medium ${cls}`} role="status">
        {text}
      </span>
      <button type="button" onClick={onAgain} disabled={busy} className="rounded border border-line px-2 py-0.5 hover:bg-surface-sunken disabled:opacity-50">
        {busy ? 'Checking…' : 'Check again'}
      </button>
    </div>
  );
}

/** Both hash chains at a glance: the snapshots' and the audit trail's, with the first broken link named. */
export function ChainStatusCard() {
  const snapshots = useQuery(chainQuery);
  const audit = useQuery(auditVerifyQuery);
  const snapText = snapshots.isPending
    ? 'Checking the snapshot chain…'
    : snapshots.isError
      ? `Snapshot chain not checked: ${snapshots.error.message}`
      : snapshots.data.valid
        ? `Snapshot chain holds: ${snapshots.data.checked} snapshot(s) verify and link.`
        : `Snapshot chain BROKEN at #${snapshots.data.firstBroken?.id} (${snapshots.data.firstBroken?.check}): ${snapshots.data.firstBroken?.detail}`;
  const auditText = audit.isPending
    ? 'Checking the audit trail…'
    : audit.isError
      ? `Audit trail not checked: ${audit.error.message}`
      : audit.data.ok
        ? `Audit trail holds: ${audit.data.checked} event(s) chained.`
        : `Audit trail BROKEN at event ${audit.data.firstBroken?.id}: ${audit.data.firstBroken?.reason}`;
  return (
    <Card title="Chain verification">
      <div className="flex flex-col gap-2">
        <Verdict ok={snapshots.data ? snapshots.data.valid : null} text={snapText} onAgain={() => void snapshots.refetch()} busy={snapshots.isFetching} />
        <Verdict ok={audit.data ? audit.data.ok : null} text={auditText} onAgain={() => void audit.refetch()} busy={audit.isFetching} />
      </div>
    </Card>
  );
}

/** The audit trail: every sign-in and write, newest first, with filters and paging. */
export function AuditTrail() {
  const [action, setAction] = useState('');
  const [actor, setActor] = useState('');
  const [offset, setOffset] = useState(0);
  const page = useQuery(auditQuery({ action: action || undefined, actor: actor.trim() || undefined, limit: PAGE, offset }));
  const total = page.data?.total ?? 0;
  return (
    <Card title="Audit trail">
      <div className="mb-2 flex flex-wrap items-end gap-3">
        <label className="flex flex-col text-xs text-ink-muted">
          Action
          <select value={action} onChange={(e) => (setAction(e.target.value), setOffset(0))} className={inputClass}>
            {ACTIONS.map((a) => (
              <option key={a} value={a}>
                {a || 'every action'}
              </option>
            ))}
          </select>
        </label>
        <label className="flex flex-col text-xs text-ink-muted">
          Who
          <input value={actor} onChange={(e) => (setActor(e.target.value), setOffset(0))} placeholder="name" className={inputClass} />
        </label>
      </div>
      {page.isError ? (
        <p role="alert" className="text-caution">
          The audit trail could not be loaded: {page.error.message}
        </p>
      ) : page.isPending ? (
        <p className="text-ink-muted">Loading…</p>
      ) : page.data.events.length === 0 ? (
        <EmptyState icon="seal" title="No audit event matches">
          Every sign-in and every write is recorded here; change the filters to see more.
        </EmptyState>
      ) : (
        <>
          <div className="overflow-x-auto">
            <table className="w-full text-left text-xs">
              <thead className="border-b border-line text-2xs uppercase tracking-wide text-ink-muted">
                <tr>
                  <th className="px-2 py-1 font-medium">At</th>
                  <th className="px-2 py-1 font-medium">Who</th>
                  <th className="px-2 py-1 font-medium">Action</th>
                  <th className="px-2 py-1 font-medium">Object</th>
                  <th className="px-2 py-1 font-medium">Hash</th>
                </tr>
              </thead>
              <tbody>
                {page.data.events.map((e) => (
                  <tr key={e.id} className="border-b border-line">
                    <td className="num px-2 py-1">{formatUtc(e.at)}</td>
                    <td className="px-2 py-1">{e.actorLabel}</td>
                    <td className="num px-2 py-1">{e.action}</td>
                    <td className="num px-2 py-1 text-ink-muted">{e.objectType ? `${e.objectType} ${e.objectId ?? ''}` : '–'}</td>
                    <td className="num px-2 py-1 text-ink-muted" title={e.hash}>
                      {e.hash.slice(0, 12)}
                    </td>
                  </tr>
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
