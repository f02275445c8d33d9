import { useMutation, useQuery, useQueryClient } from '@tanstack/react-query';
import { useCallback, useEffect, useRef, useState } from 'react';
import { CONFIDENCES, weightTotal, type CallDraft, type RegimeCall } from '@shared/api/regime-calls.ts';
import { Card } from '@/components/Page.tsx';
import { formatCycle } from '@/lib/format.ts';
import { CallPreviewPanel } from './CallPreviewPanel.tsx';
import { callKeys, clusteringQuery, deleteDraft, publishCall, regimeNamesQuery, runsQuery, saveDraft } from './api.ts';

type Draft = {
  validFrom: string;
  validTo: string;
  regimes: { from: string; to: string; regimeId: number }[];
  confidence: (typeof CONFIDENCES)[number];
  weights: { basis: 'member' | 'cluster'; clusteringId?: string; weights: { key: string; pct: number }[] };
  keyRisks: string;
  narrative: string;
  linkedRunIds: string[];
};

const SAVE_DELAY_MS = 1500;

function fromCall(call: RegimeCall): Draft {
  const { validFrom, validTo, regimes, confidence, weights, keyRisks, narrative, linkedRunIds } = call;
  return { validFrom, validTo, regimes, confidence, weights, keyRisks, narrative, linkedRunIds };
}

const input = 'mt-0.5 rounded border border-line bg-surface px-2 py-1 text-ink';

/**
 * A draft call, saved as you type (one PUT, and so one audit event, per pause of 1.5 s), with the
 * live weight total, a preview of the e-mail and Publish.
 */
export function CallEditor({ call, selectedClusteringId, onGone }: { call: RegimeCall; selectedClusteringId: string | null; onGone: () => void }) {
  const [draft, setDraft] = useState<Draft>(() => fromCall(call));
  const [status, setStatus] = useState<{ kind: 'saved' | 'saving' | 'dirty' | 'error'; text?: string }>({ kind: 'saved' });
  const [showPreview, setShowPreview] = useState(false);
  const queryClient = useQueryClient();
  const names = useQuery(regimeNamesQuery);
  const runs = useQuery(runsQuery);
  const clusteringId = draft.weights.basis === 'cluster' ? (draft.weights.clusteringId ?? null) : null;
  const clustering = useQuery({ ...clusteringQuery(clusteringId ?? ''), enabled: !!clusteringId });
  // The draft as last typed, for the debounced save (set in the change handler, never during render).
  const latest = useRef(draft);
  const timer = useRef<ReturnType<typeof setTimeout> | null>(null);

  const save = useCallback(async () => {
    if (timer.current) clearTimeout(timer.current);
    timer.current = null;
    setStatus({ kind: 'saving' });
    try {
      await saveDraft(call.id, latest.current as CallDraft);
      setStatus({ kind: 'saved', text: new Date().toLocaleTimeString() });
      void queryClient.invalidateQueries({ queryKey: callKeys.preview(call.id) });
    } catch (err) {
      setStatus({ kind: 'error', text: (err as Error).message });
      throw err;
    }
  }, [call.id, queryClient]);

  const update = (patch: Partial<Draft>) => {
    const next = { ...latest.current, ...patch };
    latest.current = next;
    setDraft(next);
    setStatus({ kind: 'dirty' });
    if (timer.current) clearTimeout(timer.current);
    timer.current = setTimeout(() => void save().catch(() => {}), SAVE_DELAY_MS);
  };
  useEffect(() => () => {
    if (timer.current) clearTimeout(timer.current);
  }, []);

  const publish = useMutation({
    mutationFn: async () => {
      await save();
      return publishCall(call.id);
    },
    onSuccess: () => void queryClient.invalidateQueries({ queryKey: callKeys.all }),
  });
  const remove = useMutation({
    mutationFn: () => deleteDraft(call.id),
    onSuccess: () => {
      void queryClient.invalidateQueries({ queryKey: callKeys.list() });
      onGone();
    },
  });

  const total = weightTotal(draft.weights.weights);
  const totalOk = Math.abs(total - 100) < 0.01;
  const readyRuns = (runs.data ?? []).filter((r) => r.state === 'ready');
  const setWeight = (key: string, pct: number) => {
    const others = draft.weights.weights.filter((w) => w.key !== key);
    update({ weights: { ...draft.weights, weights: [...others, { key, pct }].sort((a, b) => a.key.localeCompare(b.key)) } });
  };
  const weightKeys: { key: string; label: string }[] =
    draft.weights.basis === 'cluster'
      ? (clustering.data?.clusters ?? []).map((c) => ({ key: String(c.id), label: `Cluster ${c.id + 1} (members ${c.members.join(', ')})` }))
      : readyRuns
          .filter((r) => draft.linkedRunIds.includes(r.id))
          .flatMap((r) => (r.members ?? []).map((m) => ({ key: `${r.id}:${m}`, label: `${r.model ?? r.fileName} ${r.cycle ? formatCycle(r.cycle) : ''} member ${m}` })));
  const equalSplit = () => {
    const n = weightKeys.length;
    if (!n) return;
    const base = Math.floor((100 / n) * 100) / 100;
    update({ weights: { ...draft.weights, weights: weightKeys.map((k, i) => ({ key: k.key, pct: i === 0 ? Math.round((100 - base * (n - 1)) * 100) / 100 : base })) } });
  };

  return (
    <Card title={`Draft call, version ${call.version}${call.correctionOf ? ' (correction)' : ''}`}>
      <div className="flex flex-col gap-3">
        {call.correctionReason ? <p className="text-xs text-caution">Correction of version {call.version - 1}: {call.correctionReason}</p> : null}
        <div className="flex flex-wrap items-end gap-2 text-xs text-ink-muted">
          <label className="flex flex-col">
            Valid from
            <input type="date" value={draft.validFrom} onChange={(e) => update({ validFrom: e.target.value })} className={input} />
          </label>
          <label className="flex flex-col">
            to
            <input type="date" value={draft.validTo} onChange={(e) => update({ validTo: e.target.value })} className={input} />
          </label>
          <label className="flex flex-col">
            Confidence
            <select value={draft.confidence} onChange={(e) => update({ confidence: e.target.value as Draft['confidence'] })} className={input}>
              {CONFIDENCES.map((c) => (
                <option key={c}>{c}</option>
              ))}
            </select>
          </label>
          <span className="ml-auto" role="status">
            {status.kind === 'saving' ? 'Saving…' : status.kind === 'dirty' ? 'Unsaved changes' : status.kind === 'error' ? <span className="text-caution">Not saved: {status.text}</span> : status.text ? `Saved ${status.text}` : 'Saved'}
          </span>
        </div>

        <fieldset className="text-xs">
          <legend className="font-semibold uppercase tracking-wide text-ink-muted">Regimes</legend>
          {draft.regimes.map((r, i) => (
            <div key={i} className="mt-1 flex items-center gap-2">
              <input type="date" aria-label="from" value={r.from} onChange={(e) => update({ regimes: draft.regimes.map((x, j) => (j === i ? { ...x, from: e.target.value } : x)) })} className={input} />
              <input type="date" aria-label="to" value={r.to} onChange={(e) => update({ regimes: draft.regimes.map((x, j) => (j === i ? { ...x, to: e.target.value } : x)) })} className={input} />
              <select aria-label="regime" value={r.regimeId} onChange={(e) => update({ regimes: draft.regimes.map((x, j) => (j === i ? { ...x, regimeId: Number(e.target.value) } : x)) })} className={input}>
                {(names.data ?? []).filter((n) => n.active || n.id === r.regimeId).map((n) => (
                  <option key={n.id} value={n.id}>
                    {n.name}
                  </option>
                ))}
              </select>
              <button type="button" className="text-ink-muted hover:text-caution" onClick={() => update({ regimes: draft.regimes.filter((_, j) => j !== i) })}>
                Remove
              </button>
            </div>
          ))}
          <button
            type="button"
            className="mt-1 rounded border border-line px-2 py-0.5 hover:bg-surface-sunken"
            disabled={!names.data?.length}
            onClick={() => update({ regimes: [...draft.regimes, { from: draft.validFrom, to: draft.validTo, regimeId: names.data!.find((n) => n.active)?.id ?? names.data![0].id }] })}
          >
            Add regime
          </button>
        </fieldset>

        <fieldset className="text-xs">
          <legend className="font-semibold uppercase tracking-wide text-ink-muted">Linked runs</legend>
          <div className="flex flex-wrap gap-x-4">
            {readyRuns.map((r) => (
              <label key={r.id} className="flex items-center gap-1">
                <input
                  type="checkbox"
                  checked={draft.linkedRunIds.includes(r.id)}
                  onChange={(e) => update({ linkedRunIds: e.target.checked ? [...draft.linkedRunIds, r.id] : draft.linkedRunIds.filter((x) => x !== r.id) })}
                />
                {r.model ?? r.fileName} {r.cycle ? formatCycle(r.cycle) : ''}
              </label>
            ))}
            {readyRuns.length === 0 ? <span className="text-ink-muted">No ready runs.</span> : null}
          </div>
        </fieldset>

        <fieldset className="text-xs">
          <legend className="font-semibold uppercase tracking-wide text-ink-muted">Scenario weights</legend>
          <div className="flex flex-wrap items-center gap-3">
            <label className="flex items-center gap-1">
              <input type="radio" checked={draft.weights.basis === 'member'} onChange={() => update({ weights: { basis: 'member', weights: [] } })} /> per member of the linked runs
            </label>
            <label className="flex items-center gap-1">
              <input
                type="radio"
                checked={draft.weights.basis === 'cluster'}
                disabled={!selectedClusteringId && draft.weights.basis !== 'cluster'}
                onChange={() => selectedClusteringId && update({ weights: { basis: 'cluster', clusteringId: selectedClusteringId, weights: [] } })}
              />{' '}
              per cluster {selectedClusteringId ? '(the clustering selected below)' : '(select a clustering below first)'}
            </label>
            {draft.weights.basis === 'cluster' && selectedClusteringId && selectedClusteringId !== clusteringId ? (
              <button type="button" className="rounded border border-line px-2 py-0.5" onClick={() => update({ weights: { basis: 'cluster', clusteringId: selectedClusteringId, weights: [] } })}>
                Use the selected clustering
              </button>
            ) : null}
            <button type="button" className="rounded border border-line px-2 py-0.5 hover:bg-surface-sunken" onClick={equalSplit} disabled={!weightKeys.length}>
              Equal split
            </button>
          </div>
          <table className="mt-1 w-full max-w-lg">
            <tbody>
              {weightKeys.map((k) => (
                <tr key={k.key} className="border-t border-line">
                  <td className="py-0.5">{k.label}</td>
                  <td className="w-28 py-0.5 text-right">
                    <input
                      type="number"
                      min={0}
                      max={100}
                      step={0.5}
                      aria-label={`weight of ${k.label} in %`}
                      value={draft.weights.weights.find((w) => w.key === k.key)?.pct ?? 0}
                      onChange={(e) => setWeight(k.key, Number(e.target.value))}
                      className={`num w-20 text-right ${input}`}
                    />{' '}
                    %
                  </td>
                </tr>
              ))}
              <tr className="border-t border-line font-semibold">
                <td className="py-0.5">Total</td>
                <td className={`num py-0.5 text-right ${totalOk ? '' : 'text-caution'}`} aria-live="polite">
                  {total.toFixed(1)} % {totalOk ? '' : '(must be 100 %)'}
                </td>
              </tr>
            </tbody>
          </table>
          {weightKeys.length === 0 ? <p className="text-ink-muted">{draft.weights.basis === 'cluster' ? 'Load the clustering to weight its clusters.' : 'Link a run to weight its members.'}</p> : null}
        </fieldset>

        <label className="flex flex-col text-xs text-ink-muted">
          Key risks (markdown: paragraphs, **bold**, *italic*, lists, links)
          <textarea rows={3} value={draft.keyRisks} onChange={(e) => update({ keyRisks: e.target.value })} className={input} />
        </label>
        <label className="flex flex-col text-xs text-ink-muted">
          Narrative (markdown, HTML is shown as text)
          <textarea rows={8} value={draft.narrative} onChange={(e) => update({ narrative: e.target.value })} className={input} />
        </label>

        <div className="flex flex-wrap items-center gap-2">
          <button type="button" onClick={() => setShowPreview((v) => !v)} className="rounded border border-line px-3 py-1 hover:bg-surface-sunken">
            {showPreview ? 'Hide e-mail preview' : 'Preview e-mail'}
          </button>
          <button
            type="button"
            disabled={!totalOk || publish.isPending || draft.regimes.length === 0}
            onClick={() => window.confirm('Publish this call? A published version cannot be changed, and subscribers are e-mailed now.') && publish.mutate()}
            className="rounded bg-action px-3 py-1 text-white hover:bg-action-hover disabled:opacity-50"
          >
            {publish.isPending ? 'Publishing…' : 'Publish'}
          </button>
          <button type="button" onClick={() => window.confirm('Delete this draft?') && remove.mutate()} className="ml-auto text-xs text-ink-muted hover:text-caution">
            Delete draft
          </button>
        </div>
        {publish.isError ? (
          <p role="alert" className="text-caution">
            {publish.error.message}
          </p>
        ) : null}
        {showPreview && status.kind === 'saved' ? <CallPreviewPanel callId={call.id} /> : showPreview ? <p className="text-xs text-ink-muted">The preview follows the saved draft…</p> : null}
      </div>
    </Card>
  );
}
