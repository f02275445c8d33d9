import { useMutation, useQuery, useQueryClient } from '@tanstack/react-query';
import { useState } from 'react';
import type { Subscription } from '@shared/api/regime-calls.ts';
import { Card } from '@/components/Page.tsx';
import { createSubscription, deleteSubscription, subscriptionsQuery, updateSubscription } from './api.ts';

const input = 'mt-0.5 rounded border border-line bg-surface px-2 py-1 text-ink';
const parseRegions = (s: string) => s.split(',').map((x) => x.trim()).filter(Boolean);

/**
 * Who receives published regime calls by e-mail. A subscriber with no regions gets every call;
 * one with regions gets a call when its linked runs have signals for one of them.
 */
export function SubscriptionsSection() {
  const subs = useQuery(subscriptionsQuery);
  const queryClient = useQueryClient();
  const refresh = () => void queryClient.invalidateQueries({ queryKey: subscriptionsQuery.queryKey });
  const [email, setEmail] = useState('');
  const [name, setName] = useState('');
  const [regions, setRegions] = useState('');
  const add = useMutation({
    mutationFn: () => createSubscription({ email, name, regionIds: parseRegions(regions) }),
    onSuccess: () => {
      setEmail('');
      setName('');
      setRegions('');
      refresh();
    },
  });
  const toggle = useMutation({
    mutationFn: (s: Subscription) => updateSubscription(s.id, { email: s.email, name: s.name, regionIds: s.regionIds, active: !s.active }),
    onSuccess: refresh,
  });
  const remove = useMutation({ mutationFn: (s: Subscription) => deleteSubscription(s.id), onSuccess: refresh });
  const error = add.error ?? toggle.error ?? remove.error;
  return (
    <Card title="Mail subscriptions">
      <p className="mb-2 text-xs text-ink-muted">
        Published regime calls are e-mailed to every active subscriber without regions, and to those whose regions the call's linked runs cover.
      </p>
      {subs.isError ? <p role="alert" className="text-caution">{subs.error.message}</p> : null}
      <table className="w-full text-left text-xs">
        <thead className="text-2xs uppercase tracking-wide text-ink-muted">
          <tr>
            <th className="py-1 font-medium">E-mail</th>
            <th className="py-1 font-medium">Name</th>
            <th className="py-1 font-medium">Regions</th>
            <th className="py-1" aria-label="Actions" />
          </tr>
        </thead>
        <tbody>
          {(subs.data ?? []).map((s) => (
            <tr key={s.id} className={`border-t border-line ${s.active ? '' : 'text-ink-faint'}`}>
              <td className="num py-1">{s.email}</td>
              <td className="py-1">{s.name}</td>
              <td className="py-1">{s.regionIds.length ? s.regionIds.join(', ') : 'all'}</td>
              <td className="py-1 text-right">
                <button type="button" className="rounded px-2 py-0.5 text-ink-muted hover:bg-surface-sunken" onClick={() => toggle.mutate(s)}>
                  {s.active ? 'Pause' : 'Resume'}
                </button>
                <button
                  type="button"
                  className="rounded px-2 py-0.5 text-ink-muted hover:bg-surface-sunken hover:text-caution"
                  onClick={() => window.confirm(`Remove ${s.email}?`) && remove.mutate(s)}
                >
                  Remove
                </button>
              </td>
            </tr>
          ))}
          {subs.data?.length === 0 ? (
            <tr>
              <td colSpan={4} className="py-2 text-ink-muted">
                Nobody is subscribed: published calls are not e-mailed to anyone.
              </td>
            </tr>
          ) : null}
        </tbody>
      </table>
      <form
        className="mt-3 flex flex-wrap items-end gap-2 text-xs text-ink-muted"
        onSubmit={(e) => {
          e.preventDefault();
          add.mutate();
        }}
      >
        <label className="flex flex-col">
          E-mail
          <input type="email" value={email} onChange={(e) => setEmail(e.target.value)} className={input} />
        </label>
        <label className="flex flex-col">
          Name
          <input value={name} onChange={(e) => setName(e.target.value)} maxLength={120} className={input} />
        </label>
        <label className="flex flex-1 flex-col">
          Region ids (comma separated; empty: all)
          <input value={regions} onChange={(e) => setRegions(e.target.value)} className={input} />
        </label>
        <button type="submit" disabled={!email || !name.trim() || add.isPending} className="rounded border border-line px-3 py-1 text-ink hover:bg-surface-sunken disabled:opacity-50">
          Subscribe
        </button>
      </form>
      {error ? (
        <p role="alert" className="mt-1 text-caution">
          {error.message}
        </p>
      ) : null}
    </Card>
  );
}
