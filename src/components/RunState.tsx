import { RUN_STATE_LABELS, type RunState } from '@shared/api/runs.ts';

const tone: Record<RunState, string> = {
  received: 'bg-slate-200 text-slate-700 dark:bg-slate-700 dark:text-slate-200',
  reading: 'bg-action-soft text-action dark:bg-action/20 dark:text-[#9DB2FF]',
  diagnosing: 'bg-action-soft text-action dark:bg-action/20 dark:text-[#9DB2FF]',
  deriving: 'bg-action-soft text-action dark:bg-action/20 dark:text-[#9DB2FF]',
  ready: 'bg-ascent-soft text-ascent-strong dark:bg-ascent-strong/25 dark:text-ascent-soft',
  rejected: 'bg-caution-soft text-caution dark:bg-caution/20 dark:text-[#F3A59D]',
};

export function ProgressBar({ value, label }: { value: number; label: string }) {
  const pct = Math.round(Math.max(0, Math.min(1, value)) * 100);
  return (
    <div className="flex items-center gap-2">
      <div role="progressbar" aria-label={label} aria-valuemin={0} aria-valuemax={100} aria-valuenow={pct} className="h-1.5 w-24 overflow-hidden rounded bg-surface-sunken">
        <div className="h-full bg-action transition-[width]" style={{ width: `${pct}%` }} />
      </div>
      <span className="num text-2xs text-ink-muted">{pct} %</span>
    </div>
  );
}

/** A run's state in plain words, with progress while it is being worked on. */
export function RunStateBadge({ state, progress }: { state: RunState; progress: number }) {
  const busy = state !== 'ready' && state !== 'rejected';
  return (
    <div className="flex items-center gap-2">
      <span className={`rounded px-1.5 py-0.5 text-2xs font-medium ${tone[state]}`}>{RUN_STATE_LABELS[state]}</span>
      {busy ? <ProgressBar value={progress} label={`${RUN_STATE_LABELS[state]} progress`} /> : null}
    </div>
  );
}
