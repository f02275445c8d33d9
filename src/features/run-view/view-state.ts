/**
 * What the Run view shows (member, valid time, level, map layer) lives in the address, so a
 * view can be shared and the browser's back button steps through it.
 */
import { useCallback, useMemo } from 'react';
import { useSearchParams } from 'react-router-dom';
import { OMEGA_PART_NAMES, type OmegaPartName } from '@shared/api/run-view.ts';
import type { Run } from '@shared/api/runs.ts';
import type { MemberChoice } from './api.ts';

export interface ViewState {
  member: MemberChoice;
  step: number;
  level: number;
  part: OmegaPartName;
}

/** 500 hPa when the run has it (the classic mid-troposphere omega level), else the middle level. */
export function defaultLevel(levels: number[]): number {
  return levels.includes(500) ? 500 : levels[Math.floor(levels.length / 2)];
}

/** The view from the address, with anything missing or not in the run replaced by a default. */
export function readViewState(params: URLSearchParams, run: Pick<Run, 'steps' | 'levelsHpa' | 'members'>): ViewState | null {
  const steps = run.steps ?? [];
  const levels = run.levelsHpa ?? [];
  const members = run.members ?? [];
  if (!steps.length || !levels.length || !members.length) return null;
  const stepParam = Number(params.get('step'));
  const levelParam = Number(params.get('level'));
  const memberParam = params.get('member');
  const partParam = params.get('part') as OmegaPartName | null;
  const defaultStep = steps.find((s) => s > 0) ?? steps[0];
  let member: MemberChoice = members.length > 1 ? 'mean' : members[0];
  if (memberParam !== null && memberParam !== 'mean' && members.includes(Number(memberParam))) member = Number(memberParam);
  return {
    member,
    step: params.has('step') && steps.includes(stepParam) ? stepParam : defaultStep,
    level: params.has('level') && levels.includes(levelParam) ? levelParam : defaultLevel(levels),
    part: partParam && (OMEGA_PART_NAMES as readonly string[]).includes(partParam) ? partParam : 'total',
  };
}

export function useViewState(run: Pick<Run, 'steps' | 'levelsHpa' | 'members'> | undefined): [ViewState | null, (patch: Partial<ViewState>) => void] {
  const [params, setParams] = useSearchParams();
  const state = useMemo(() => (run ? readViewState(params, run) : null), [params, run]);
  const update = useCallback(
    (patch: Partial<ViewState>) => {
      setParams(
        (prev) => {
          const next = new URLSearchParams(prev);
          for (const [key, value] of Object.entries(patch)) next.set(key, String(value));
          return next;
        },
        { replace: true },
      );
    },
    [setParams],
  );
  return [state, update];
}
