/**
 * QG diagnosis of one valid time: from geopotential and temperature on pressure levels to
 * omega_QG, its parts forced by differential vorticity advection and by thickness advection
 * (the equation is linear, so total = sum), and omega from the Q-vector form as a cross-check.
 * Sources: Holton and Hakim, An Introduction to Dynamic Meteorology (5th ed.), chapter 6;
 * Hoskins, Draghici and Davies (1978). Refusals are typed errors (errors.ts).
 */
import { FieldShapeError, MissingValuesError } from './errors.ts';
import { areaMeanProfile, staticStability } from './fields.ts';
import { qVectorForcing, traditionalForcing } from './forcing.ts';
import { qgGeometry, type Field, type QgAxes, type QgGeometry } from './grid.ts';
import { relativeResidual } from './operator.ts';
import { OmegaSolver } from './solver.ts';

export interface QgStepInput {
  axes: QgAxes;
  /** geopotential, m2 s-2, [level][lat][lon] */
  z: Field;
  /** temperature, K */
  t: Field;
  /** the model's own omega, Pa s-1 (optional; missing values allowed) */
  w?: Field | null;
}

export interface QgDiagnosis {
  lat0: number;
  /** s-1 */
  f0: number;
  /** m-1 s-1 */
  beta: number;
  /** m2 Pa-2 s-2, one per level */
  sigma: Float64Array;
  /** Pa s-1, [level][lat][lon]; zero on the boundary */
  omega: Float64Array;
  omegaVorticity: Float64Array;
  omegaThickness: Float64Array;
  omegaQVector: Float64Array;
  /** right-hand sides of (Laplacian + (f0^2/sigma) d2/dp2) omega = F, Pa s-1 m-2 */
  forcing: { vorticity: Float64Array; thickness: Float64Array; qVector: Float64Array };
  /** relative residuals ||A omega - F|| / ||F|| of the discrete systems */
  residual: { total: number; vorticity: number; thickness: number; qVector: number };
  /** wall time of the linear solves alone (three solves: vorticity, thickness, Q-vector), ms */
  solveMs: number;
  solves: number;
  warnings: string[];
  /** per level, area-weighted pattern correlation of omega_QG with the model's omega (null where undefined) */
  patternCorrelation: (number | null)[] | null;
}

/** Share of missing values beyond which a field is refused rather than filled. */
export const MAX_MISSING_FRACTION = 0.01;
/** |omega| beyond this (Pa s-1) points to bad input (SCIENCE.md section 2). */
export const SUSPICIOUS_OMEGA = 10;

function checkLength(name: string, field: Field, g: QgGeometry): void {
  const expected = g.nx * g.ny * g.nz;
  if (field.length !== expected) {
    throw new FieldShapeError(`${name} has ${field.length} values; the axes need ${g.nz} levels x ${g.ny} latitudes x ${g.nx} longitudes = ${expected}`);
  }
}

/**
 * Copies a field to Float64Array, filling isolated missing values (non-finite) with the mean of
 * their finite neighbours on the same level, if they are fewer than 1 % of the points.
 */
export function fillIsolatedGaps(name: string, field: Field, g: QgGeometry, warnings: string[]): Float64Array {
  checkLength(name, field, g);
  const out = Float64Array.from(field);
  const missing: number[] = [];
  for (let n = 0; n < out.length; n++) if (!Number.isFinite(out[n])) missing.push(n);
  if (missing.length === 0) return out;
  const share = missing.length / out.length;
  if (share >= MAX_MISSING_FRACTION) {
    throw new MissingValuesError(`${name}: ${missing.length} of ${out.length} values are missing (${(100 * share).toFixed(2)} %); at most ${100 * MAX_MISSING_FRACTION} % isolated gaps can be filled`);
  }
  const { nx, ny } = g;
  for (const n of missing) {
    const i = n % nx, j = Math.floor(n / nx) % ny;
    let sum = 0, count = 0;
    const add = (m: number) => { if (Number.isFinite(field[m])) { sum += field[m]; count++; } };
    if (i > 0) add(n - 1);
    if (i < nx - 1) add(n + 1);
    if (j > 0) add(n - nx);
    if (j < ny - 1) add(n + nx);
    if (count === 0) {
      throw new MissingValuesError(`${name}: a missing value at level ${Math.floor(n / (nx * ny))}, row ${j}, column ${i} has no valid neighbour (a gap, not an isolated point)`);
    }
    out[n] = sum / count;
  }
  warnings.push(`${name}: filled ${missing.length} isolated missing value(s) by averaging their neighbours`);
  return out;
}

/**
 * Pattern correlation of two fields on one level over interior points, weighted by cos lat
 * (centred, i.e. anomalies from the weighted means). Points where either value is not finite
 * are skipped. Null when fewer than 3 points or a field has no variance there.
 */
export function patternCorrelation(a: Field, b: Field, g: QgGeometry, level: number): number | null {
  const { nx, ny } = g;
  const base = level * nx * ny;
  let sw = 0, sa = 0, sb = 0, count = 0;
  for (let j = 1; j < ny - 1; j++) {
    const w = g.cosLat[j];
    for (let n = base + j * nx + 1; n < base + j * nx + nx - 1; n++) {
      if (!Number.isFinite(a[n]) || !Number.isFinite(b[n])) continue;
      sw += w; sa += w * a[n]; sb += w * b[n]; count++;
    }
  }
  if (count < 3) return null;
  const ma = sa / sw, mb = sb / sw;
  let cab = 0, caa = 0, cbb = 0;
  for (let j = 1; j < ny - 1; j++) {
    const w = g.cosLat[j];
    for (let n = base + j * nx + 1; n < base + j * nx + nx - 1; n++) {
      if (!Number.isFinite(a[n]) || !Number.isFinite(b[n])) continue;
      const da = a[n] - ma, db = b[n] - mb;
      cab += w * da * db; caa += w * da * da; cbb += w * db * db;
    }
  }
  if (caa <= 0 || cbb <= 0) return null;
  return cab / Math.sqrt(caa * cbb);
}

/** Per level: minimum, area-weighted (cos lat) mean and maximum of a 3-D field over all points. */
export function levelStatistics(field: Field, g: QgGeometry): { min: number; mean: number; max: number }[] {
  const { nx, ny, nz } = g;
  const out: { min: number; mean: number; max: number }[] = [];
  for (let k = 0; k < nz; k++) {
    let min = Infinity, max = -Infinity, s = 0, sw = 0;
    for (let j = 0; j < ny; j++) {
      const w = g.cosLat[j], row = (k * ny + j) * nx;
      for (let n = row; n < row + nx; n++) {
        const v = field[n];
        if (v < min) min = v;
        if (v > max) max = v;
        s += w * v; sw += w;
      }
    }
    out.push({ min, mean: s / sw, max });
  }
  return out;
}

function sameGrid(a: QgGeometry, b: QgGeometry): boolean {
  return a.nx === b.nx && a.ny === b.ny && a.nz === b.nz && a.dlon === b.dlon && a.dlat === b.dlat
    && a.latRad[0] === b.latRad[0] && a.levels.every((p, k) => p === b.levels[k]);
}

function flagLargeOmega(omega: Float64Array, g: QgGeometry, warnings: string[]): void {
  let worst = 0, at = -1;
  for (let n = 0; n < omega.length; n++) if (Math.abs(omega[n]) > worst) { worst = Math.abs(omega[n]); at = n; }
  if (worst > SUSPICIOUS_OMEGA) {
    const k = Math.floor(at / (g.nx * g.ny));
    warnings.push(`|omega_QG| reaches ${worst.toFixed(1)} Pa/s at ${(g.levels[k] / 100).toFixed(0)} hPa, beyond ~${SUSPICIOUS_OMEGA} Pa/s: check the input (geopotential in m2 s-2, not gpm; temperature in K; level units)`);
  }
}

/** Diagnoses one valid time. Pass `solver` (built for the same grid) to reuse its buffers across steps. */
export function diagnose(input: QgStepInput, options: { solver?: OmegaSolver } = {}): QgDiagnosis {
  const g = qgGeometry(input.axes);
  const warnings: string[] = [];
  const z = fillIsolatedGaps('z (geopotential)', input.z, g, warnings);
  const t = fillIsolatedGaps('t (temperature)', input.t, g, warnings);
  if (input.w) checkLength('w (model omega)', input.w, g);
  const { sigma, clamped } = staticStability(g.levels, areaMeanProfile(t, g));
  if (clamped.length > 0) {
    const where = clamped.map((k) => `${(g.levels[k] / 100).toFixed(0)} hPa`).join(', ');
    warnings.push(`static stability clamped to a small positive value at ${where}: the area-mean temperature profile is neutral or superadiabatic there`);
  }
  const solver = options.solver && sameGrid(options.solver.g, g) ? options.solver : new OmegaSolver(g);
  solver.setStability(sigma);
  const trad = traditionalForcing(z, sigma, g);
  const qForcing = qVectorForcing(z, t, sigma, g);
  const vort = solver.solve(trad.vorticity);
  const thick = solver.solve(trad.thickness);
  const qv = solver.solve(qForcing);
  const omega = new Float64Array(vort.omega.length);
  const totalForcing = new Float64Array(omega.length);
  for (let n = 0; n < omega.length; n++) {
    omega[n] = vort.omega[n] + thick.omega[n];
    totalForcing[n] = trad.vorticity[n] + trad.thickness[n];
  }
  flagLargeOmega(omega, g, warnings);
  let correlation: (number | null)[] | null = null;
  if (input.w) {
    const w = input.w;
    correlation = Array.from(g.levels, (_, k) => (k === 0 || k === g.nz - 1 ? null : patternCorrelation(omega, w, g, k)));
  }
  return {
    lat0: g.lat0, f0: g.f0, beta: g.beta, sigma,
    omega, omegaVorticity: vort.omega, omegaThickness: thick.omega, omegaQVector: qv.omega,
    forcing: { vorticity: trad.vorticity, thickness: trad.thickness, qVector: qForcing },
    residual: {
      total: relativeResidual(solver.operator, omega, totalForcing),
      vorticity: vort.residual, thickness: thick.residual, qVector: qv.residual,
    },
    solveMs: vort.solveMs + thick.solveMs + qv.solveMs,
    solves: 3,
    warnings,
    patternCorrelation: correlation,
  };
}
