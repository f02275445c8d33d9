import { useQuery } from '@tanstack/react-query';
import { useState } from 'react';
import { callPreviewQuery } from './api.ts';

/** The e-mail as subscribers would get it: HTML in a sandboxed frame (no scripts, no same-origin), or the text part. */
export function CallPreviewPanel({ callId }: { callId: string }) {
  const preview = useQuery(callPreviewQuery(callId));
  const [part, setPart] = useState<'html' | 'text'>('html');
  if (preview.isPending) return <p className="text-xs text-ink-muted">Rendering the e-mail…</p>;
  if (preview.isError) return <p role="alert" className="text-caution">{preview.error.message}</p>;
  const p = preview.data;
  return (
    <div className="rounded border border-line">
      <div className="flex items-center gap-3 border-b border-line px-2 py-1 text-xs">
        <span className="font-medium">{p.subject}</span>
        <span className="text-ink-muted">{p.recipients} subscriber{p.recipients === 1 ? '' : 's'} would receive it now</span>
        <span className="ml-auto flex gap-1">
          {(['html', 'text'] as const).map((x) => (
            <button key={x} type="button" onClick={() => setPart(x)} className={`rounded px-2 py-0.5 ${part === x ? 'bg-surface-sunken font-medium' : ''}`}>
              {x.toUpperCase()}
            </button>
          ))}
        </span>
      </div>
      {part === 'html' ? (
        <iframe title="E-mail preview (HTML)" sandbox="" srcDoc={p.html} className="h-96 w-full bg-white" />
      ) : (
        <pre className="num max-h-96 overflow-auto whitespace-pre-wrap p-2 text-xs">{p.text}</pre>
      )}
    </div>
  );
}
