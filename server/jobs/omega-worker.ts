/**
 * Worker-thread entry of the omega pool (omega-pool.ts): one QG diagnosis (member, step) per
 * task. Solvers are cached per grid and reused across tasks, so FFT plans and work buffers are
 * built once per worker. Result arrays are transferred back, not copied.
 */
import { move, transferableSymbol, valueSymbol } from 'piscina';
import { diagnose } from '../science/qg/diagnose.ts';
import { QgInputError } from '../science/qg/errors.ts';
import { qgGeometry } from '../science/qg/grid.ts';
import { OmegaSolver } from '../science/qg/solver.ts';
import type { OmegaTask, OmegaTaskResult } from './omega-pool.ts';

const MAX_CACHED_SOLVERS = 4;
const solvers = new Map<string, OmegaSolver>();

function gridKey(task: OmegaTask): string {
  const { lat, lon, levels } = task.axes;
  return [lat[0], lat[lat.length - 1], lat.length, lon[0], lon[lon.length - 1], lon.length, ...levels].join(',');
}

function solverFor(task: OmegaTask): OmegaSolver {
  const key = gridKey(task);
  let solver = solvers.get(key);
  if (!solver) {
    solver = new OmegaSolver(qgGeometry(task.axes));
    if (solvers.size >= MAX_CACHED_SOLVERS) solvers.delete(solvers.keys().next().value!);
    solvers.set(key, solver);
  }
  return solver;
}

/** Marks a refusal of the input (not a fault) across the thread boundary, where error classes are lost. */
export const REFUSAL_PREFIX = 'QG-REFUSAL:';

export default function solveOmegaTask(task: OmegaTask) {
  let d: ReturnType<typeof diagnose>;
  try {
    d = diagnose({ axes: task.axes, z: task.z, t: task.t, w: task.w ?? null }, { solver: solverFor(task) });
  } catch (err) {
    if (err instanceof QgInputError) throw new Error(`${REFUSAL_PREFIX}${err.code}:${err.message}`);
    throw err;
  }
  const result: OmegaTaskResult = {
    member: task.member,
    step: task.step,
    lat0: d.lat0, f0: d.f0, beta: d.beta,
    sigma: d.sigma,
    omega: d.omega, omegaVorticity: d.omegaVorticity, omegaThickness: d.omegaThickness, omegaQVector: d.omegaQVector,
    forcing: task.includeForcing ? d.forcing : null,
    residual: d.residual,
    solveMs: d.solveMs,
    solves: d.solves,
    warnings: d.warnings,
    patternCorrelation: d.patternCorrelation,
  };
  const buffers: ArrayBuffer[] = [d.sigma, d.omega, d.omegaVorticity, d.omegaThickness, d.omegaQVector].map((a) => a.buffer as ArrayBuffer);
  if (result.forcing) buffers.push(...[result.forcing.vorticity, result.forcing.thickness, result.forcing.qVector].map((a) => a.buffer as ArrayBuffer));
  return move({ [transferableSymbol]: buffers, [valueSymbol]: result } as never);
}
