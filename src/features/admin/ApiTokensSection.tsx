import { useMutation, useQuery, useQueryClient } from '@tanstack/react-query';
import { useState } from 'react';
import { ROLE_LABELS, ROLES, type Role } from '@shared/roles.ts';
import { Card } from '@/components/Page.tsx';
import { apiTokensQuery, issueApiToken, revokeApiToken, type ApiToken } from './api.ts';

/** "2026-12-01 06:42 UTC": when a token was made or last used. */
function when(iso: string | null): string {
  if (!iso) return 'never';
  return `${iso.slice(0, 10)} ${iso.slice(11, 16)} UTC`;
}

/**
 * API tokens for machines (a scheduled upload on the desk's server): issue with a name and
 * roles, see when each was last used, revoke. A new token's secret is shown once, here.
 */
export function ApiTokensSection() {
  const query = useQuery(apiTokensQuery);
  const queryClient = useQueryClient();
  const refresh = () => queryClient.invalidateQueries({ queryKey: apiTokensQuery.queryKey });
  const [name, setName] = useState('');
  const [roles, setRoles] = useState<Role[]>(['meteorologist']);
  const issue = useMutation({ mutationFn: issueApiToken, onSuccess: () => void refresh() });
  const revoke = useMutation({ mutationFn: revokeApiToken, onSuccess: () => void refresh() });
  const toggle = (r: Role) => setRoles(roles.includes(r) ? roles.filter((x) => x !== r) : ROLES.filter((x) => x === r || roles.includes(x)));

  return (
    <Card title="API tokens">
      <p className="mb-2 text-xs text-ink-muted">
        For machines, e.g. <span className="num">npm run liftwise -- upload FILE --url URL --token-file F</span>. A token acts with its own roles; only its SHA-256 is kept.
      </p>
      {query.isPending ? <p>Loading…</p> : null}
      {query.isError ? (
        <p role="alert" className="text-caution">
          {query.error.message}
        </p>
      ) : null}
      {query.data ? <TokenTable tokens={query.data} onRevoke={(id) => revoke.mutate(id)} revoking={revoke.isPending} /> : null}
      {revoke.isError ? <p role="alert" className="text-xs text-caution">{revoke.error.message}</p> : null}
      <form
        className="mt-3 flex flex-wrap items-end gap-2"
        onSubmit={(e) => {
          e.preventDefault();
          if (name.trim() && roles.length) issue.mutate({ name: name.trim(), roles });
        }}
      >
        <label className="flex flex-1 flex-col text-xs text-ink-muted">
          Name (which machine or job)
          <input value={name} onChange={(e) => setName(e.target.value)} maxLength={100} className="mt-0.5 rounded border border-line bg-surface px-2 py-1 text-ink" />
        </label>
        <fieldset className="flex gap-2 text-xs text-ink-muted">
          <legend className="sr-only">Roles</legend>
          {ROLES.map((r) => (
            <label key={r} className="flex items-center gap-1">
              <input type="checkbox" checked={roles.includes(r)} onChange={() => toggle(r)} />
              {ROLE_LABELS[r]}
            </label>
          ))}
        </fieldset>
        <button type="submit" disabled={!name.trim() || roles.length === 0 || issue.isPending} className="rounded bg-action px-3 py-1.5 font-medium text-white hover:bg-action-hover disabled:opacity-50">
          {issue.isPending ? 'Issuing…' : 'Issue token'}
        </button>
      </form>
      {issue.isError ? <p role="alert" className="mt-1 text-xs text-caution">{issue.error.message}</p> : null}
      {issue.data ? (
        <div className="mt-3 rounded border border-caution p-2 text-xs" role="status">
          <p className="mb-1 font-medium">Token for “{issue.data.apiToken.name}”: copy it now, it will not be shown again.</p>
          <code className="num block select-all break-all rounded bg-surface-sunken p-1">{issue.data.token}</code>
          <button type="button" className="mt-1 text-ink-muted underline" onClick={() => issue.reset()}>
            I have stored it
          </button>
        </div>
      ) : null}
    </Card>
  );
}

function TokenTable({ tokens, onRevoke, revoking }: { tokens: ApiToken[]; onRevoke: (id: string) => void; revoking: boolean }) {
  if (tokens.length === 0) return <p className="text-ink-muted">No tokens issued.</p>;
  return (
    <table className="w-full text-left">
      <thead className="text-2xs uppercase tracking-wide text-ink-muted">
        <tr>
          <th className="py-1 font-medium">Name</th>
          <th className="py-1 font-medium">Roles</th>
          <th className="py-1 font-medium">Last used</th>
          <th className="py-1" aria-label="Actions" />
        </tr>
      </thead>
      <tbody>
        {tokens.map((t) => (
          <tr key={t.id} className={`border-t border-line ${t.revokedAt ? 'text-ink-muted line-through' : ''}`}>
            <td className="py-1">{t.name}</td>
            <td className="py-1">{t.roles.map((r) => ROLE_LABELS[r]).join(', ')}</td>
            <td className="num py-1">{when(t.lastUsedAt)}</td>
            <td className="py-1 text-right">
              {t.revokedAt ? (
                <span className="text-xs no-underline">revoked {when(t.revokedAt)}</span>
              ) : (
                <button
                  type="button"
                  disabled={revoking}
                  className="rounded px-2 py-0.5 text-xs text-ink-muted hover:bg-surface-sunken hover:text-caution"
                  aria-label={`Revoke ${t.name}`}
                  onClick={() => onRevoke(t.id)}
                >
                  Revoke
                </button>
              )}
            </td>
          </tr>
        ))}
      </tbody>
    </table>
  );
}
