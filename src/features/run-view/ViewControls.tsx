import { useState, type ReactNode } from 'react';
import { createPortal } from 'react-dom';
import { OMEGA_PART_LABELS, OMEGA_PART_NAMES, type OmegaPartName } from '@shared/api/run-view.ts';
import type { Run } from '@shared/api/runs.ts';
import { formatCycle } from '@/lib/format.ts';
import type { MemberChoice } from './api.ts';
import { formatValidTime } from './options.ts';
import type { ViewState } from './view-state.ts';

function validIso(run: Run, step: number): string {
  return new Date(Date.parse(run.cycle ?? '1970-01-01T00:00:00Z') + step * 3_600_000).toISOString();
}

/** Renders into the layout's top bar when there is one (the valid-time scrubber belongs there). */
function TopBar({ children }: { children: ReactNode }) {
  // The layout has committed its top bar before any screen's controls mount (they wait for data).
  const [target] = useState<HTMLElement | null>(() => (typeof document === 'undefined' ? null : document.getElementById('top-bar-context')));
  return target ? createPortal(children, target) : <div className="flex flex-wrap items-center gap-3 rounded-md border border-line bg-surface-raised px-3 py-2">{children}</div>;
}

const selectClass = 'num rounded border border-line bg-surface px-1.5 py-0.5 text-xs';
const buttonClass = 'rounded border border-line px-1.5 py-0.5 text-xs hover:bg-surface-sunken disabled:opacity-40';

/** Valid-time scrubber with previous/next buttons, level and member choosers: the run view's top bar. */
export function ViewControls({ run, view, onChange }: { run: Run; view: ViewState; onChange: (patch: Partial<ViewState>) => void }) {
  const steps = run.steps ?? [];
  const index = Math.max(0, steps.indexOf(view.step));
  const go = (i: number) => onChange({ step: steps[Math.min(steps.length - 1, Math.max(0, i))] });
  return (
    <TopBar>
      <span className="hidden truncate text-xs font-medium xl:inline">{`${run.model ?? 'Run'} · ${run.cycle ? formatCycle(run.cycle) : ''}`}</span>
      <div className="flex items-center gap-1.5" role="group" aria-label="Valid time">
        <button type="button" className={buttonClass} onClick={() => go(index - 1)} disabled={index === 0} aria-label="Previous valid time">
          ‹
        </button>
        <input
          type="range"
          min={0}
          max={Math.max(0, steps.length - 1)}
          step={1}
          value={index}
          onChange={(e) => go(Number(e.target.value))}
          aria-label="Valid time"
          aria-valuetext={formatValidTime(validIso(run, view.step), view.step)}
          className="w-40 accent-[#2E5BFF]"
        />
        <button type="button" className={buttonClass} onClick={() => go(index + 1)} disabled={index >= steps.length - 1} aria-label="Next valid time">
          ›
        </button>
        <output className="num whitespace-nowrap text-xs" aria-live="polite" data-testid="valid-time">
          {formatValidTime(validIso(run, view.step), view.step)}
        </output>
      </div>
      <label className="flex items-center gap-1 text-xs text-ink-muted">
        Level
        <select className={selectClass} value={view.level} onChange={(e) => onChange({ level: Number(e.target.value) })}>
          {(run.levelsHpa ?? []).map((p) => (
            <option key={p} value={p}>
              {p} hPa
            </option>
          ))}
        </select>
      </label>
      <label className="flex items-center gap-1 text-xs text-ink-muted">
        Member
        <select
          className={selectClass}
          value={String(view.member)}
          onChange={(e) => onChange({ member: (e.target.value === 'mean' ? 'mean' : Number(e.target.value)) as MemberChoice })}
        >
          {(run.members ?? []).length > 1 ? <option value="mean">Ensemble mean</option> : null}
          {(run.members ?? []).map((m) => (
            <option key={m} value={m}>
              {(run.members ?? []).length > 1 ? `Member ${m}${m === 0 ? ' (control)' : ''}` : 'Deterministic'}
            </option>
          ))}
        </select>
      </label>
    </TopBar>
  );
}

/** The map layer switch, each choice with one line on what it shows. */
export function PartSwitch({ value, onChange }: { value: OmegaPartName; onChange: (part: OmegaPartName) => void }) {
  return (
    <fieldset className="flex flex-col gap-1">
      <legend className="sr-only">Map layer</legend>
      <div className="flex flex-wrap gap-1" role="radiogroup" aria-label="Map layer">
        {OMEGA_PART_NAMES.map((p) => (
          <label
            key={p}
            className={`cursor-pointer rounded border px-2 py-0.5 text-xs focus-within:ring-2 focus-within:ring-action ${
              value === p ? 'border-action bg-action-soft text-action dark:bg-action/20' : 'border-line text-ink-muted hover:bg-surface-sunken'
            }`}
          >
            <input type="radio" name="omega-part" value={p} checked={value === p} onChange={() => onChange(p)} className="sr-only" />
            {OMEGA_PART_LABELS[p].label}
          </label>
        ))}
      </div>
      <p className="text-2xs text-ink-muted">{OMEGA_PART_LABELS[value].explain}</p>
    </fieldset>
  );
}
