/**
 * The Run view's reads: diagnosis rows per step, omega maps and vertical cross-sections from
 * the Float32 derived store. Nothing here writes.
 */
import fs from 'node:fs';
import { and, eq } from 'drizzle-orm';
import type { Diagnostics, OmegaMap, OmegaPartName, Section, StepDiagnosis } from '@shared/api/run-view.ts';
import type { DbHandle } from '../db/client.ts';
import { runDiagnostics, runs, type RunGrid } from '../db/schema.ts';
import { AppError, badRequest, conflict, notFound } from '../errors.ts';
import { omegaFilePath, readOmegaPart } from './derived-store.ts';

type RunRow = typeof runs.$inferSelect;
type DiagnosisRow = typeof runDiagnostics.$inferSelect;
export type MemberChoice = number | 'mean';

export interface RunViewDeps {
  db: DbHandle;
  storageDir: string;
}

/** Mean Earth radius, km (the sphere the QG engine uses, SCIENCE.md section 2). */
const EARTH_RADIUS_KM = 6371;

async function loadRun(deps: RunViewDeps, runId: string): Promise<RunRow & { grid: RunGrid; steps: number[]; levelsHpa: number[]; members: number[] }> {
  const [run] = await deps.db.db.select().from(runs).where(eq(runs.id, runId));
  if (!run) throw notFound('No run with that id.');
  if (run.state === 'rejected') throw conflict(`This run was rejected and has no diagnosis: ${run.message ?? 'no reason recorded'}.`);
  if (run.state !== 'ready' || !run.grid || !run.steps || !run.levelsHpa || !run.members) {
    throw new AppError(409, 'not_ready', `This run is not ready yet (state: ${run.state}, ${Math.round(run.progress * 100)} % done); its diagnosis appears once it is ready.`);
  }
  return run as RunRow & { grid: RunGrid; steps: number[]; levelsHpa: number[]; members: number[] };
}

/** On a deterministic run the "mean" is member 0 itself. */
function resolveMember(run: { members: number[] }, member: MemberChoice): MemberChoice {
  if (member === 'mean') return run.members.length > 1 ? 'mean' : run.members[0];
  if (!run.members.includes(member)) throw badRequest(`member ${member} is not in this run; its members are ${run.members.join(', ')} (or "mean").`);
  return member;
}

function checkStep(run: { steps: number[] }, step: number): void {
  if (!run.steps.includes(step)) throw badRequest(`step ${step} h is not in this run; its steps are ${run.steps.join(', ')} h.`);
}

function levelIndex(run: { levelsHpa: number[] }, levelHpa: number): number {
  const k = run.levelsHpa.findIndex((p) => Math.abs(p - levelHpa) < 1e-3);
  if (k < 0) throw badRequest(`level ${levelHpa} hPa is not in this run; its levels are ${run.levelsHpa.join(', ')} hPa.`);
  return k;
}

function validTime(run: RunRow, step: number): string {
  const base = run.cycle ? run.cycle.getTime() : 0;
  return new Date(base + step * 3_600_000).toISOString();
}

/** The canonical axes rebuilt from the run row: latitudes ascending, longitudes ascending. */
export function gridAxes(grid: RunGrid): { lat: number[]; lon: number[] } {
  const round = (v: number) => Math.round(v * 1e6) / 1e6;
  return {
    lat: Array.from({ length: grid.nlat }, (_v, j) => round(grid.latLast + j * grid.dlat)),
    lon: Array.from({ length: grid.nlon }, (_v, i) => round(grid.lonFirst + i * grid.dlon)),
  };
}

/** Float32 values as JSON numbers with float32 precision (7 significant digits), NaN as null. */
function jsonValue(v: number): number | null {
  return Number.isFinite(v) ? Number(v.toPrecision(7)) : null;
}

function nanToNull(values: number[] | null): (number | null)[] | null {
  return values ? values.map((v) => (Number.isFinite(v) ? v : null)) : null;
}

function toStep(run: RunRow, row: DiagnosisRow): StepDiagnosis {
  return {
    step: row.step,
    validTime: validTime(run, row.step),
    residual: row.residual,
    solveMs: row.solveMs,
    sigma: row.sigma,
    omegaMin: row.omegaMin,
    omegaMean: row.omegaMean,
    omegaMax: row.omegaMax,
    correlation: nanToNull(row.correlation),
    warnings: row.warnings,
  };
}

/** Element-wise mean of arrays; a null entry (absent correlation) stays out of the mean. */
function meanArrays(arrays: ((number | null)[] | null)[]): (number | null)[] | null {
  const present = arrays.filter((a): a is (number | null)[] => a !== null);
  if (present.length === 0) return null;
  return present[0].map((_v, k) => {
    const vals = present.map((a) => a[k]).filter((v): v is number => v !== null && Number.isFinite(v));
    return vals.length ? vals.reduce((s, v) => s + v, 0) / vals.length : null;
  });
}

/** The ensemble-mean view of the diagnosis: each step's per-member rows averaged. */
function averageSteps(steps: StepDiagnosis[][]): StepDiagnosis[] {
  const byStep = new Map<number, StepDiagnosis[]>();
  for (const list of steps) for (const s of list) byStep.set(s.step, [...(byStep.get(s.step) ?? []), s]);
  return [...byStep.entries()]
    .sort((a, b) => a[0] - b[0])
    .map(([, rows]) => {
      const avg = (pick: (s: StepDiagnosis) => number[]) => meanArrays(rows.map(pick)) as number[];
      const avgNum = (pick: (s: StepDiagnosis) => number) => rows.reduce((sum, r) => sum + pick(r), 0) / rows.length;
      return {
        step: rows[0].step,
        validTime: rows[0].validTime,
        residual: Math.max(...rows.map((r) => r.residual)),
        solveMs: avgNum((r) => r.solveMs),
        sigma: avg((r) => r.sigma),
        omegaMin: avg((r) => r.omegaMin),
        omegaMean: avg((r) => r.omegaMean),
        omegaMax: avg((r) => r.omegaMax),
        correlation: meanArrays(rows.map((r) => r.correlation)),
        warnings: [...new Set(rows.flatMap((r) => r.warnings))],
      };
    });
}

/**
 * The diagnosis of one member, or for member=mean the per-member rows averaged per step (the
 * residual is the worst member's). A deterministic run's mean is its member 0.
 */
export async function getDiagnostics(deps: RunViewDeps, runId: string, member: MemberChoice): Promise<Diagnostics> {
  const run = await loadRun(deps, runId);
  const chosen = resolveMember(run, member);
  const where = chosen === 'mean' ? eq(runDiagnostics.runId, runId) : and(eq(runDiagnostics.runId, runId), eq(runDiagnostics.member, chosen));
  const rows = (await deps.db.db.select().from(runDiagnostics).where(where)).filter((r) => r.member >= 0);
  if (rows.length === 0) throw notFound('This run has no diagnosis rows for that member.');
  const byMember = new Map<number, StepDiagnosis[]>();
  for (const row of rows) byMember.set(row.member, [...(byMember.get(row.member) ?? []), toStep(run, row)]);
  const steps = chosen === 'mean' ? averageSteps([...byMember.values()]) : [...byMember.values()][0].sort((a, b) => a.step - b.step);
  return {
    runId,
    member: member === 'mean' ? 'mean' : chosen,
    averagedMembers: chosen === 'mean' ? [...byMember.keys()].sort((a, b) => a - b) : [],
    f0: rows.reduce((s, r) => s + r.f0, 0) / rows.length,
    levelsHpa: run.levelsHpa,
    steps,
  };
}

async function readPart(deps: RunViewDeps, runId: string, member: MemberChoice, step: number, part: OmegaPartName): Promise<Float32Array> {
  if (!fs.existsSync(omegaFilePath(deps.storageDir, runId, member, step))) {
    throw notFound(`No stored omega for member ${member} at +${step} h: the member may have failed; see the members table.`);
  }
  return readOmegaPart(deps.storageDir, runId, member, step, part);
}

export async function getOmegaMap(
  deps: RunViewDeps,
  runId: string,
  q: { member: MemberChoice; step: number; level: number; part: OmegaPartName },
): Promise<OmegaMap> {
  const run = await loadRun(deps, runId);
  const member = resolveMember(run, q.member);
  checkStep(run, q.step);
  const k = levelIndex(run, q.level);
  const field = await readPart(deps, runId, member, q.step, q.part);
  const { lat, lon } = gridAxes(run.grid);
  const n = lat.length * lon.length;
  const values = new Array<number | null>(n);
  let min = Infinity;
  let max = -Infinity;
  for (let i = 0; i < n; i++) {
    const v = jsonValue(field[k * n + i]);
    values[i] = v;
    if (v !== null) {
      if (v < min) min = v;
      if (v > max) max = v;
    }
  }
  return {
    member: q.member === 'mean' ? 'mean' : member,
    step: q.step,
    validTime: validTime(run, q.step),
    levelHpa: run.levelsHpa[k],
    part: q.part,
    lat,
    lon,
    values,
    units: 'Pa s-1',
    min: Number.isFinite(min) ? min : null,
    max: Number.isFinite(max) ? max : null,
  };
}

const rad = (d: number) => (d * Math.PI) / 180;
const deg = (r: number) => (r * 180) / Math.PI;

/** Great-circle distance, km (haversine on a sphere of radius 6371 km). */
export function greatCircleKm(a: { lat: number; lon: number }, b: { lat: number; lon: number }): number {
  const dLat = rad(b.lat - a.lat);
  const dLon = rad(b.lon - a.lon);
  const h = Math.sin(dLat / 2) ** 2 + Math.cos(rad(a.lat)) * Math.cos(rad(b.lat)) * Math.sin(dLon / 2) ** 2;
  return 2 * EARTH_RADIUS_KM * Math.asin(Math.min(1, Math.sqrt(h)));
}

/** `points` points from a to b inclusive: along the great circle (spherical interpolation) or straight in lat/lon. */
export function sectionPath(a: { lat: number; lon: number }, b: { lat: number; lon: number }, points: number, line: 'great-circle' | 'straight'): { lat: number; lon: number }[] {
  const fractions = Array.from({ length: points }, (_v, i) => i / (points - 1));
  const angle = greatCircleKm(a, b) / EARTH_RADIUS_KM;
  if (line === 'straight' || angle < 1e-9) {
    return fractions.map((f) => ({ lat: a.lat + f * (b.lat - a.lat), lon: a.lon + f * (b.lon - a.lon) }));
  }
  const toVec = (p: { lat: number; lon: number }) => [Math.cos(rad(p.lat)) * Math.cos(rad(p.lon)), Math.cos(rad(p.lat)) * Math.sin(rad(p.lon)), Math.sin(rad(p.lat))];
  const va = toVec(a);
  const vb = toVec(b);
  return fractions.map((f) => {
    const wa = Math.sin((1 - f) * angle) / Math.sin(angle);
    const wb = Math.sin(f * angle) / Math.sin(angle);
    const [x, y, z] = [0, 1, 2].map((c) => wa * va[c] + wb * vb[c]);
    let lon = deg(Math.atan2(y, x));
    // Stay on the run's side of the antimeridian: the canonical longitudes are contiguous.
    while (lon < Math.min(a.lon, b.lon) - 180) lon += 360;
    while (lon > Math.max(a.lon, b.lon) + 180) lon -= 360;
    return { lat: deg(Math.atan2(z, Math.hypot(x, y))), lon };
  });
}

/** Bilinear interpolation of one [lat][lon] level of a regular grid; NaN outside or next to a missing value. */
export function bilinear(field: ArrayLike<number>, offset: number, axes: { lat: number[]; lon: number[] }, lat: number, lon: number): number {
  const ny = axes.lat.length;
  const nx = axes.lon.length;
  const dy = (axes.lat[ny - 1] - axes.lat[0]) / (ny - 1);
  const dx = (axes.lon[nx - 1] - axes.lon[0]) / (nx - 1);
  const fy = (lat - axes.lat[0]) / dy;
  const fx = (lon - axes.lon[0]) / dx;
  const eps = 1e-9;
  if (fy < -eps || fy > ny - 1 + eps || fx < -eps || fx > nx - 1 + eps) return Number.NaN;
  const j = Math.min(Math.max(Math.floor(fy), 0), ny - 2);
  const i = Math.min(Math.max(Math.floor(fx), 0), nx - 2);
  const ty = Math.min(Math.max(fy - j, 0), 1);
  const tx = Math.min(Math.max(fx - i, 0), 1);
  const at = (jj: number, ii: number) => field[offset + jj * nx + ii];
  return (1 - ty) * ((1 - tx) * at(j, i) + tx * at(j, i + 1)) + ty * ((1 - tx) * at(j + 1, i) + tx * at(j + 1, i + 1));
}

export async function getSection(
  deps: RunViewDeps,
  runId: string,
  q: { member: MemberChoice; step: number; part: OmegaPartName; from: { lat: number; lon: number }; to: { lat: number; lon: number }; points: number; line: 'great-circle' | 'straight' },
): Promise<Section> {
  const run = await loadRun(deps, runId);
  const member = resolveMember(run, q.member);
  checkStep(run, q.step);
  const axes = gridAxes(run.grid);
  const latMin = axes.lat[0];
  const latMax = axes.lat[axes.lat.length - 1];
  const lonMin = axes.lon[0];
  const lonMax = axes.lon[axes.lon.length - 1];
  for (const [name, p] of [['from', q.from], ['to', q.to]] as const) {
    if (p.lat < latMin || p.lat > latMax || p.lon < lonMin || p.lon > lonMax) {
      throw badRequest(`${name} (${p.lat}, ${p.lon}) lies outside the run's domain: latitude ${latMin} to ${latMax}°N, longitude ${lonMin} to ${lonMax}°E.`);
    }
  }
  const field = await readPart(deps, runId, member, q.step, q.part);
  const path = sectionPath(q.from, q.to, q.points, q.line);
  const distanceKm = [0];
  for (let i = 1; i < path.length; i++) distanceKm.push(distanceKm[i - 1] + greatCircleKm(path[i - 1], path[i]));
  const n = axes.lat.length * axes.lon.length;
  const values = run.levelsHpa.map((_p, k) => path.map((pt) => jsonValue(bilinear(field, k * n, axes, pt.lat, pt.lon))));
  return {
    member: q.member === 'mean' ? 'mean' : member,
    step: q.step,
    validTime: validTime(run, q.step),
    part: q.part,
    line: q.line,
    distanceKm: distanceKm.map((d) => Math.round(d * 1000) / 1000),
    path: path.map((p) => ({ lat: Math.round(p.lat * 1e6) / 1e6, lon: Math.round(p.lon * 1e6) / 1e6 })),
    levelsHpa: run.levelsHpa,
    values,
    units: 'Pa s-1',
  };
}
