import { useMutation, useQuery, useQueryClient } from '@tanstack/react-query';
import { useState } from 'react';
import type { RegimeCallDetail } from '@shared/api/regime-calls.ts';
import { CAUTIONS } from '@shared/cautions.ts';
import { canCall } from '@shared/permissions.ts';
import { Card, CautionNote } from '@/components/Page.tsx';
import { CallPreviewPanel } from './CallPreviewPanel.tsx';
import { callKeys, regimeNamesQuery, signedInQuery, startCorrection } from './api.ts';

/** A published version, read-only, with its series' versions and the correction action. */
export function CallView({ detail, onOpen }: { detail: RegimeCallDetail; onOpen: (id: string) => void }) {
  const { call, versions, narrativeHtml } = detail;
  const names = useQuery(regimeNamesQuery);
  const me = useQuery(signedInQuery);
  const [reason, setReason] = useState('');
  const [showPreview, setShowPreview] = useState(false);
  const queryClient = useQueryClient();
  const correct = useMutation({
    mutationFn: () => startCorrection(call.id, reason),
    onSuccess: (draft) => {
      void queryClient.invalidateQueries({ queryKey: callKeys.all });
      onOpen(draft.id);
    },
  });
  const nameOf = (id: number) => names.data?.find((n) => n.id === id)?.name ?? `regime ${id}`;
  const latest = versions[versions.length - 1];
  const mayCorrect = canCall('POST', '/api/regime-calls/:id/corrections', me.data?.roles ?? null) && latest.id === call.id;

  return (
    <Card title={`Regime call, version ${call.version} (published ${call.publishedAt ? new Date(call.publishedAt).toLocaleString() : ''})`}>
      <div className="flex flex-col gap-3">
        {call.correctionReason ? <p className="text-xs text-caution">Corrects version {call.version - 1}: {call.correctionReason}</p> : null}
        {latest.id !== call.id ? (
          <p className="text-xs text-caution">
            A newer version exists:{' '}
            <button type="button" className="underline" onClick={() => onOpen(latest.id)}>
              version {latest.version}
            </button>
          </p>
        ) : null}
        <dl className="grid grid-cols-[8rem_1fr] gap-y-1 text-xs">
          <dt className="text-ink-muted">Valid</dt>
          <dd className="num">
            {call.validFrom} to {call.validTo}
          </dd>
          <dt className="text-ink-muted">Confidence</dt>
          <dd>{call.confidence}</dd>
          <dt className="text-ink-muted">Regimes</dt>
          <dd>
            {call.regimes.map((r, i) => (
              <div key={i}>
                <span className="num">{r.from === r.to ? r.from : `${r.from} to ${r.to}`}</span>: {nameOf(r.regimeId)}
              </div>
            ))}
          </dd>
          <dt className="text-ink-muted">Weights ({call.weights.basis})</dt>
          <dd>
            {call.weights.weights.map((w) => (
              <div key={w.key} className="num">
                {call.weights.basis === 'cluster' ? `Cluster ${Number(w.key) + 1}` : w.key}: {w.pct.toFixed(1)} %
              </div>
            ))}
          </dd>
          <dt className="text-ink-muted">Key risks</dt>
          <dd className="whitespace-pre-wrap">{call.keyRisks || '–'}</dd>
          <dt className="text-ink-muted">Author</dt>
          <dd>{call.authorName ?? '–'}</dd>
        </dl>
        {/* narrativeHtml is the server's strict markdown: every input character is HTML-escaped first. */}
        <div className="prose-sm max-w-prose [&_a]:text-action [&_a]:underline [&_ol]:list-decimal [&_ol]:pl-5 [&_p]:mb-2 [&_ul]:list-disc [&_ul]:pl-5" dangerouslySetInnerHTML={{ __html: narrativeHtml }} />
        <CautionNote>{CAUTIONS.join(' ')}</CautionNote>
        <div className="text-xs">
          <span className="font-semibold uppercase tracking-wide text-ink-muted">Versions</span>
          <ul>
            {versions.map((v) => (
              <li key={v.id}>
                <button type="button" onClick={() => onOpen(v.id)} className={v.id === call.id ? 'font-semibold' : 'underline'}>
                  Version {v.version}
                </button>{' '}
                {v.state === 'published' ? `published ${v.publishedAt ? new Date(v.publishedAt).toLocaleString() : ''}` : 'draft'}
                {v.correctionReason ? `: ${v.correctionReason}` : ''}
              </li>
            ))}
          </ul>
        </div>
        <button type="button" onClick={() => setShowPreview((s) => !s)} className="self-start rounded border border-line px-3 py-1 text-xs hover:bg-surface-sunken">
          {showPreview ? 'Hide the e-mail' : 'Show the e-mail'}
        </button>
        {showPreview ? <CallPreviewPanel callId={call.id} /> : null}
        {mayCorrect ? (
          <form
            className="flex items-end gap-2 text-xs"
            onSubmit={(e) => {
              e.preventDefault();
              correct.mutate();
            }}
          >
            <label className="flex flex-1 flex-col text-ink-muted">
              Reason for a correction (required; the correction is a new version, this one stays as published)
              <input value={reason} onChange={(e) => setReason(e.target.value)} maxLength={2000} className="mt-0.5 rounded border border-line bg-surface px-2 py-1 text-ink" />
            </label>
            <button type="submit" disabled={reason.trim().length < 5 || correct.isPending} className="rounded border border-line px-3 py-1 hover:bg-surface-sunken disabled:opacity-50">
              Start correction
            </button>
          </form>
        ) : null}
        {correct.isError ? (
          <p role="alert" className="text-caution">
            {correct.error.message}
          </p>
        ) : null}
      </div>
    </Card>
  );
}
