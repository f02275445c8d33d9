import { useMutation, useQuery, useQueryClient } from '@tanstack/react-query';
import { useState } from 'react';
import type { RoleMapping } from '@shared/api/auth.ts';
import { ROLE_LABELS, ROLES, type Role } from '@shared/roles.ts';
import { Card } from '@/components/Page.tsx';
import { adminKeys, roleMappingsQuery, saveRoleMappings } from './api.ts';

/** Identity-provider group -> Liftwise role, edited as a whole and saved at once. Takes effect at each person's next sign-in. */
export function RoleMappingSection() {
  const query = useQuery(roleMappingsQuery);
  const queryClient = useQueryClient();
  const save = useMutation({
    mutationFn: saveRoleMappings,
    onSuccess: (mappings) => queryClient.setQueryData(adminKeys.roleMappings(), mappings),
  });
  if (query.isPending) return <Card title="Role mapping">Loading…</Card>;
  if (query.isError)
    return (
      <Card title="Role mapping">
        <p role="alert" className="text-caution">
          {query.error.message}
        </p>
      </Card>
    );
  // A new saved table (after saving) starts a fresh editor.
  return <RoleMappingEditor key={JSON.stringify(query.data)} saved={query.data} save={save} />;
}

type SaveMutation = ReturnType<typeof useMutation<RoleMapping[], Error, RoleMapping[]>>;

function RoleMappingEditor({ saved, save }: { saved: RoleMapping[]; save: SaveMutation }) {
  const [rows, setRows] = useState<RoleMapping[]>(saved);
  const [group, setGroup] = useState('');
  const [role, setRole] = useState<Role>('trader');
  const dirty = JSON.stringify(rows) !== JSON.stringify(saved);
  const duplicate = rows.some((r) => r.group === group.trim() && r.role === role);
  const add = () => {
    if (!group.trim() || duplicate) return;
    setRows([...rows, { group: group.trim(), role }].sort((a, b) => a.group.localeCompare(b.group) || a.role.localeCompare(b.role)));
    setGroup('');
  };
  return (
    <Card title="Role mapping">
      <p className="mb-2 text-xs text-ink-muted">Groups sent by the identity provider, and the Liftwise role each grants. Changes apply at each person's next sign-in.</p>
      <table className="w-full text-left">
        <thead className="text-2xs uppercase tracking-wide text-ink-muted">
          <tr>
            <th className="py-1 font-medium">Group</th>
            <th className="py-1 font-medium">Role</th>
            <th className="py-1" aria-label="Actions" />
          </tr>
        </thead>
        <tbody>
          {rows.map((r) => (
            <tr key={`${r.group}\u0000${r.role}`} className="border-t border-line">
              <td className="num py-1">{r.group}</td>
              <td className="py-1">{ROLE_LABELS[r.role]}</td>
              <td className="py-1 text-right">
                <button
                  type="button"
                  className="rounded px-2 py-0.5 text-xs text-ink-muted hover:bg-surface-sunken hover:text-caution"
                  aria-label={`Remove ${r.group} as ${ROLE_LABELS[r.role]}`}
                  onClick={() => setRows(rows.filter((x) => x !== r))}
                >
                  Remove
                </button>
              </td>
            </tr>
          ))}
          {rows.length === 0 ? (
            <tr>
              <td colSpan={3} className="py-2 text-ink-muted">
                No group grants a role: nobody who signs in will have one.
              </td>
            </tr>
          ) : null}
        </tbody>
      </table>
      <form
        className="mt-3 flex items-end gap-2"
        onSubmit={(e) => {
          e.preventDefault();
          add();
        }}
      >
        <label className="flex flex-1 flex-col text-xs text-ink-muted">
          Group
          <input value={group} onChange={(e) => setGroup(e.target.value)} maxLength={200} className="mt-0.5 rounded border border-line bg-surface px-2 py-1 text-ink" />
        </label>
        <label className="flex flex-col text-xs text-ink-muted">
          Role
          <select value={role} onChange={(e) => setRole(e.target.value as Role)} className="mt-0.5 rounded border border-line bg-surface px-2 py-1 text-ink">
            {ROLES.map((r) => (
              <option key={r} value={r}>
                {ROLE_LABELS[r]}
              </option>
            ))}
          </select>
        </label>
        <button type="submit" disabled={!group.trim() || duplicate} className="rounded border border-line px-3 py-1 hover:bg-surface-sunken disabled:opacity-50">
          Add
        </button>
      </form>
      <div className="mt-3 flex items-center gap-3">
        <button
          type="button"
          disabled={!dirty || save.isPending}
          onClick={() => save.mutate(rows)}
          className="rounded bg-action px-3 py-1.5 font-medium text-white hover:bg-action-hover disabled:opacity-50"
        >
          {save.isPending ? 'Saving…' : 'Save mapping'}
        </button>
        {dirty ? (
          <button type="button" className="text-xs text-ink-muted underline" onClick={() => setRows(saved)}>
            Discard changes
          </button>
        ) : null}
        {save.isError ? <p role="alert" className="text-xs text-caution">{save.error.message}</p> : null}
        {save.isSuccess && !dirty ? <p className="text-xs text-ink-muted">Saved.</p> : null}
      </div>
    </Card>
  );
}
