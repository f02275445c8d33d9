import { useMutation, useQuery, useQueryClient } from '@tanstack/react-query';
import { useState } from 'react';
import type { RegimeName } from '@shared/api/regime-calls.ts';
import { Card } from '@/components/Page.tsx';
import { createRegimeName, regimeNamesAdminQuery, updateRegimeName } from './api.ts';

const input = 'mt-0.5 rounded border border-line bg-surface px-2 py-1 text-ink';

/** The desk's regime names: add, rename, retire (a retired name stays readable in old calls). */
export function RegimeNamesSection() {
  const names = useQuery(regimeNamesAdminQuery);
  const queryClient = useQueryClient();
  const refresh = () => void queryClient.invalidateQueries({ queryKey: regimeNamesAdminQuery.queryKey });
  const [name, setName] = useState('');
  const [description, setDescription] = useState('');
  const add = useMutation({
    mutationFn: () => createRegimeName({ name, description }),
    onSuccess: () => {
      setName('');
      setDescription('');
      refresh();
    },
  });
  const toggle = useMutation({
    mutationFn: (n: RegimeName) => updateRegimeName(n.id, { name: n.name, description: n.description, active: !n.active }),
    onSuccess: refresh,
  });
  return (
    <Card title="Regime names">
      <p className="mb-2 text-xs text-ink-muted">The names meteorologists choose from in a regime call. Retiring a name hides it from new calls only.</p>
      {names.isError ? <p role="alert" className="text-caution">{names.error.message}</p> : null}
      <table className="w-full text-left text-xs">
        <tbody>
          {(names.data ?? []).map((n) => (
            <tr key={n.id} className="border-t border-line">
              <td className={`py-1 ${n.active ? '' : 'text-ink-faint line-through'}`}>{n.name}</td>
              <td className="py-1 text-ink-muted">{n.description}</td>
              <td className="py-1 text-right">
                <button type="button" className="rounded px-2 py-0.5 text-ink-muted hover:bg-surface-sunken" onClick={() => toggle.mutate(n)}>
                  {n.active ? 'Retire' : 'Restore'}
                </button>
              </td>
            </tr>
          ))}
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
          Name
          <input value={name} onChange={(e) => setName(e.target.value)} maxLength={80} className={input} />
        </label>
        <label className="flex flex-1 flex-col">
          Description
          <input value={description} onChange={(e) => setDescription(e.target.value)} maxLength={500} className={input} />
        </label>
        <button type="submit" disabled={name.trim().length < 2 || add.isPending} className="rounded border border-line px-3 py-1 text-ink hover:bg-surface-sunken disabled:opacity-50">
          Add name
        </button>
      </form>
      {add.isError || toggle.isError ? (
        <p role="alert" className="mt-1 text-caution">
          {(add.error ?? toggle.error)?.message}
        </p>
      ) : null}
    </Card>
  );
}
