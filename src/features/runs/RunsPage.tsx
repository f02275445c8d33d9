import { useQuery } from '@tanstack/react-query';
import { Link } from 'react-router-dom';
import type { Run } from '@shared/api/runs.ts';
import { EmptyState, PageHeader } from '@/components/Page.tsx';
import { RunStateBadge } from '@/components/RunState.tsx';
import { formatBytes, formatCycle } from '@/lib/format.ts';
import { useCan } from '@/lib/session.ts';
import { runListQuery } from './api.ts';
import { UploadPanel } from './UploadPanel.tsx';

function gridText(run: Run): string {
  if (!run.grid) return '–';
  const g = run.grid;
  return `${g.nlon}×${g.nlat} · ${g.dlon}°`;
}

export function RunsPage() {
  const runs = useQuery(runListQuery());
  const canUpload = useCan('POST', '/api/runs');
  return (
    <div className="flex flex-col gap-4">
      <PageHeader title="Runs" subtitle="Every uploaded model run with its model, cycle, members, state and progress." />
      {canUpload ? <UploadPanel /> : null}
      {runs.isError ? (
        <p role="alert" className="text-caution">
          The runs could not be loaded: {runs.error.message}
        </p>
      ) : runs.data && runs.data.length === 0 ? (
        <EmptyState icon="runs" title="No model runs yet">
          {canUpload
            ? 'Upload a GRIB2 or NetCDF run above; it will be listed here with its processing state.'
            : 'Runs uploaded by the desk meteorologists will be listed here with their processing state.'}
        </EmptyState>
      ) : (
        <div className="overflow-x-auto rounded-md border border-line bg-surface-raised">
          <table className="w-full text-left text-xs">
            <thead className="border-b border-line text-2xs uppercase tracking-wide text-ink-muted">
              <tr>
                <th className="px-3 py-2 font-medium">Model</th>
                <th className="px-3 py-2 font-medium">Cycle (UTC)</th>
                <th className="px-3 py-2 text-right font-medium">Members</th>
                <th className="px-3 py-2 text-right font-medium">Steps</th>
                <th className="px-3 py-2 text-right font-medium">Levels</th>
                <th className="px-3 py-2 font-medium">Grid</th>
                <th className="px-3 py-2 text-right font-medium">Size</th>
                <th className="px-3 py-2 font-medium">State</th>
                <th className="px-3 py-2 font-medium">File</th>
              </tr>
            </thead>
            <tbody>
              {(runs.data ?? []).map((run) => (
                <tr key={run.id} className="border-b border-line last:border-0 hover:bg-surface-sunken">
                  <td className="px-3 py-1.5">
                    <Link to={`/runs/${run.id}`} className="font-medium text-action hover:underline">
                      {run.model ?? (run.state === 'rejected' ? 'not readable' : 'reading…')}
                    </Link>
                  </td>
                  <td className="num px-3 py-1.5">{run.cycle ? formatCycle(run.cycle) : '–'}</td>
                  <td className="num px-3 py-1.5 text-right">{run.members?.length ?? '–'}</td>
                  <td className="num px-3 py-1.5 text-right">{run.steps ? `${run.steps.length} (to +${run.steps[run.steps.length - 1]} h)` : '–'}</td>
                  <td className="num px-3 py-1.5 text-right">{run.levelsHpa?.length ?? '–'}</td>
                  <td className="num px-3 py-1.5">{gridText(run)}</td>
                  <td className="num px-3 py-1.5 text-right">{formatBytes(run.sizeBytes)}</td>
                  <td className="px-3 py-1.5">
                    <RunStateBadge state={run.state} progress={run.progress} />
                    {run.state === 'rejected' && run.message ? <p className="mt-0.5 max-w-md text-2xs text-caution">{run.message}</p> : null}
                  </td>
                  <td className="max-w-48 truncate px-3 py-1.5 text-ink-muted" title={run.fileName}>
                    {run.fileName}
                  </td>
                </tr>
              ))}
            </tbody>
          </table>
        </div>
      )}
    </div>
  );
}
