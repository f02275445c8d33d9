import { useQuery } from '@tanstack/react-query';
import { useState } from 'react';
import { EmptyState, PageHeader } from '@/components/Page.tsx';
import { ApiError } from '@/lib/api.ts';
import { outboxQuery, type CaughtMail } from './api.ts';

export function OutboxPage() {
  const mails = useQuery(outboxQuery);
  const [openId, setOpenId] = useState<string | null>(null);
  const sorted = [...(mails.data ?? [])].sort((a, b) => b.receivedAt.localeCompare(a.receivedAt));
  const open = sorted.find((m) => m.id === openId) ?? null;
  // 404: this server has no local catcher (a mail server is configured), so nothing is caught here.
  const noCatcher = mails.error instanceof ApiError && mails.error.status === 404;
  return (
    <div className="flex flex-col gap-4">
      <PageHeader title="Outbox" subtitle="Development only: the mails the local mail catcher received." />
      {mails.isPending ? <p className="text-ink-muted">Loading…</p> : null}
      {mails.isError && !noCatcher ? (
        <p role="alert" className="text-caution">
          {mails.error.message}
        </p>
      ) : null}
      {(mails.data && sorted.length === 0) || noCatcher ? (
        <EmptyState icon="outbox" title="No mail caught">
          {noCatcher ? 'No local mail catcher runs here: mail goes to the configured mail server.' : "Regime-call e-mails sent while developing land here instead of in anyone's inbox."}
        </EmptyState>
      ) : null}
      {sorted.length ? (
        <div className="grid gap-4 lg:grid-cols-[minmax(20rem,2fr)_3fr]">
          <table className="w-full self-start text-left text-xs">
            <thead className="text-2xs uppercase tracking-wide text-ink-muted">
              <tr>
                <th className="py-1 font-medium">Received</th>
                <th className="py-1 font-medium">To</th>
                <th className="py-1 font-medium">Subject</th>
              </tr>
            </thead>
            <tbody>
              {sorted.map((m) => (
                <tr key={m.id} onClick={() => setOpenId(m.id)} className={`cursor-pointer border-t border-line ${m.id === openId ? 'bg-action-soft/40' : 'hover:bg-surface-sunken'}`}>
                  <td className="num py-1 pr-2">{new Date(m.receivedAt).toLocaleString()}</td>
                  <td className="py-1 pr-2">{m.to.join(', ')}</td>
                  <td className="py-1">
                    <button type="button" className="text-left" onClick={() => setOpenId(m.id)}>
                      {m.subject}
                    </button>
                  </td>
                </tr>
              ))}
            </tbody>
          </table>
          {open ? <MailView key={open.id} mail={open} /> : <p className="text-ink-muted">Choose a mail to read it.</p>}
        </div>
      ) : null}
    </div>
  );
}

/** One caught mail: HTML in a sandboxed frame (no scripts, no same-origin access), or the text part. */
function MailView({ mail }: { mail: CaughtMail }) {
  const [part, setPart] = useState<'html' | 'text'>(mail.html ? 'html' : 'text');
  return (
    <section className="rounded border border-line">
      <header className="border-b border-line px-2 py-1 text-xs">
        <div className="font-medium">{mail.subject}</div>
        <div className="text-ink-muted">
          From {mail.from} to {mail.to.join(', ')}, {new Date(mail.receivedAt).toLocaleString()}
        </div>
        <div className="mt-1 flex gap-1">
          {mail.html ? (
            <button type="button" onClick={() => setPart('html')} className={`rounded px-2 py-0.5 ${part === 'html' ? 'bg-surface-sunken font-medium' : ''}`}>
              HTML
            </button>
          ) : null}
          <button type="button" onClick={() => setPart('text')} className={`rounded px-2 py-0.5 ${part === 'text' ? 'bg-surface-sunken font-medium' : ''}`}>
            Text
          </button>
        </div>
      </header>
      {part === 'html' && mail.html ? (
        <iframe title={`Mail: ${mail.subject}`} sandbox="" srcDoc={mail.html} className="h-[32rem] w-full bg-white" />
      ) : (
        <pre className="num max-h-[32rem] overflow-auto whitespace-pre-wrap p-2 text-xs">{mail.text}</pre>
      )}
    </section>
  );
}
