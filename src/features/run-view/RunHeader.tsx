import type { Run } from '@shared/api/runs.ts';
import { RunStateBadge } from '@/components/RunState.tsx';
import { formatBytes, formatCycle } from '@/lib/format.ts';

function Fact({ label, children }: { label: string; children: React.ReactNode }) {
  return (
    <div className="min-w-0">
      <dt className="text-2xs uppercase tracking-wide text-ink-muted">{label}</dt>
      <dd className="num truncate">{children}</dd>
    </div>
  );
}

/** Model, cycle, members, steps, levels, grid and checksum of one run. */
export function RunHeader({ run }: { run: Run }) {
  const g = run.grid;
  return (
    <section aria-label="Run facts" className="rounded-md border border-line bg-surface-raised p-3">
      <div className="mb-2 flex items-center justify-between gap-3">
        <h2 className="font-semibold">
          {run.model ?? 'Unnamed model'} <span className="num font-normal text-ink-muted">{run.cycle ? formatCycle(run.cycle) : ''}</span>
        </h2>
        <RunStateBadge state={run.state} progress={run.progress} />
      </div>
      {run.state === 'rejected' && run.message ? (
        <p role="alert" className="mb-2 text-caution">
          {run.message}
        </p>
      ) : null}
      <dl className="grid grid-cols-2 gap-x-6 gap-y-2 text-xs md:grid-cols-4 xl:grid-cols-8">
        <Fact label="Format">{run.format ?? '–'}</Fact>
        <Fact label="Members">{run.members ? `${run.members.length}${run.isEnsemble ? ' (ensemble)' : ''}` : '–'}</Fact>
        <Fact label="Steps">{run.steps ? `${run.steps.length}: +${run.steps[0]} to +${run.steps[run.steps.length - 1]} h` : '–'}</Fact>
        <Fact label="Levels">{run.levelsHpa ? `${run.levelsHpa.length}: ${Math.max(...run.levelsHpa)}–${Math.min(...run.levelsHpa)} hPa` : '–'}</Fact>
        <Fact label="Grid">{g ? `${g.nlon}×${g.nlat}, ${g.dlon}°×${g.dlat}°` : '–'}</Fact>
        <Fact label="Domain">{g ? `${g.latLast}…${g.latFirst}°N, ${g.lonFirst}…${g.lonLast}°E` : '–'}</Fact>
        <Fact label="Size">{formatBytes(run.sizeBytes)}</Fact>
        <Fact label="SHA-256">
          <span title={run.checksum}>{run.checksum.slice(0, 16)}…</span>
        </Fact>
      </dl>
    </section>
  );
}
