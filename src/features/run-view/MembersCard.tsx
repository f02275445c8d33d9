import { useMutation, useQuery, useQueryClient } from '@tanstack/react-query';
import { canCall } from '@shared/permissions.ts';
import { ProgressBar } from '@/components/RunState.tsx';
import { Card } from '@/components/Page.tsx';
import { membersQuery, retryMember, runViewKeys, runViewMeQuery } from './api.ts';

const stateTone: Record<string, string> = {
  done: 'text-ascent-strong dark:text-ascent-mid',
  failed: 'text-caution',
};

/** Each member's processing state; a meteorologist can retry a failed one. */
export function MembersCard({ runId }: { runId: string }) {
  const members = useQuery(membersQuery(runId));
  const me = useQuery(runViewMeQuery);
  const client = useQueryClient();
  const retry = useMutation({
    mutationFn: (member: number) => retryMember(runId, member),
    onSettled: () => {
      void client.invalidateQueries({ queryKey: runViewKeys.members(runId) });
      void client.invalidateQueries({ queryKey: runViewKeys.run(runId) });
    },
  });
  const roles = me.data?.roles ?? null;
  const mayRetry = (member: number) => canCall('POST', `/api/runs/${runId}/members/${member}/retry`, roles);
  return (
    <Card title="Members">
      {members.isError ? (
        <p role="alert" className="text-caution">
          The members cannot be listed: {members.error.message}
        </p>
      ) : !members.data ? (
        <p className="text-ink-muted">Loading the members…</p>
      ) : members.data.length === 0 ? (
        <p className="text-ink-muted">No members yet: they are listed once the file has been read.</p>
      ) : (
        <div className="max-h-72 overflow-auto">
          <table className="w-full text-xs">
            <thead className="sticky top-0 bg-surface-raised text-left text-2xs uppercase tracking-wide text-ink-muted">
              <tr>
                <th className="py-1 pr-2">Member</th>
                <th className="pr-2">State</th>
                <th className="pr-2">Progress</th>
                <th className="pr-2">Attempts</th>
                <th className="pr-2">Message</th>
                <th />
              </tr>
            </thead>
            <tbody>
              {members.data.map((m) => (
                <tr key={m.member} className="border-t border-line">
                  <td className="num py-1 pr-2">{m.member}</td>
                  <td className={`pr-2 ${stateTone[m.state] ?? ''}`}>{m.state}</td>
                  <td className="pr-2">
                    <ProgressBar value={m.progress} label={`Member ${m.member} progress`} />
                  </td>
                  <td className="num pr-2">{m.attempts}</td>
                  <td className="max-w-md truncate pr-2 text-ink-muted" title={m.message ?? ''}>
                    {m.message ?? '–'}
                  </td>
                  <td className="text-right">
                    {m.state === 'failed' && mayRetry(m.member) ? (
                      <button
                        type="button"
                        className="rounded bg-action px-2 py-0.5 text-white hover:bg-action-hover disabled:opacity-50"
                        disabled={retry.isPending}
                        onClick={() => retry.mutate(m.member)}
                      >
                        Retry member {m.member}
                      </button>
                    ) : null}
                  </td>
                </tr>
              ))}
            </tbody>
          </table>
        </div>
      )}
      {retry.isError ? (
        <p role="alert" className="mt-1 text-xs text-caution">
          Retry refused: {retry.error.message}
        </p>
      ) : null}
    </Card>
  );
}
