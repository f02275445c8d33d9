/**
 * The discrete QG omega operator
 *   A omega = Laplacian(omega) + (f0^2 / sigma(p)) d2 omega / dp2,
 * second-order centred differences on the sphere (SCIENCE.md section 2): the horizontal
 * Laplacian in its five-point flux form, 1/(a^2 cos^2 lat) d2/dlon2 + 1/(a^2 cos lat) d/dlat(cos lat d/dlat),
 * and the vertical second derivative on uneven pressure levels,
 *   d2f/dp2 ~ 2/(h- + h+) [ (f_{k+1} - f_k)/h+ - (f_k - f_{k-1})/h- ].
 * Unknowns are the interior points; omega = 0 on the lateral boundary and the top and bottom levels.
 * Units: omega in Pa s-1 gives A omega in Pa s-1 m-2.
 */
import type { QgGeometry } from './grid.ts';

export interface OmegaOperator {
  g: QgGeometry;
  /** sigma per level, m2 Pa-2 s-2 (only interior levels are used) */
  sigma: Float64Array;
  /** per row j: coefficient of the longitude second difference, and of the south and north neighbours */
  cLon: Float64Array;
  cSouth: Float64Array;
  cNorth: Float64Array;
  /** per level k: coefficients of omega at k-1 (below), k+1 (above); the centre is -(below + above) */
  cBelow: Float64Array;
  cAbove: Float64Array;
}

/** Coefficients of the discrete operator for a grid and a sigma(p) (all sigma must be > 0). */
export function omegaOperator(g: QgGeometry, sigma: Float64Array): OmegaOperator {
  const { ny, nz, a, dlon, dlat, levels: p } = g;
  if (sigma.length !== nz) throw new RangeError(`sigma has ${sigma.length} values for ${nz} levels`);
  const cLon = new Float64Array(ny), cSouth = new Float64Array(ny), cNorth = new Float64Array(ny);
  for (let j = 1; j < ny - 1; j++) {
    const c = g.cosLat[j];
    cLon[j] = 1 / (a * a * c * c * dlon * dlon);
    cSouth[j] = g.cosLatHalf[j - 1] / (a * a * c * dlat * dlat);
    cNorth[j] = g.cosLatHalf[j] / (a * a * c * dlat * dlat);
  }
  const cBelow = new Float64Array(nz), cAbove = new Float64Array(nz);
  for (let k = 1; k < nz - 1; k++) {
    if (!(sigma[k] > 0)) throw new RangeError(`sigma must be positive at every interior level (level ${k}: ${sigma[k]})`);
    const hBelow = p[k - 1] - p[k], hAbove = p[k] - p[k + 1];
    const scale = (g.f0 * g.f0) / sigma[k] * (2 / (hBelow + hAbove));
    cBelow[k] = scale / hBelow;
    cAbove[k] = scale / hAbove;
  }
  return { g, sigma: Float64Array.from(sigma), cLon, cSouth, cNorth, cBelow, cAbove };
}

/** out = A omega on interior points, 0 on the boundary. omega's boundary values act as Dirichlet data. */
export function applyOmegaOperator(op: OmegaOperator, omega: Float64Array, out: Float64Array): Float64Array {
  const { nx, ny, nz } = op.g;
  const plane = nx * ny;
  out.fill(0);
  for (let k = 1; k < nz - 1; k++) {
    const cb = op.cBelow[k], ca = op.cAbove[k], cv = -(cb + ca);
    for (let j = 1; j < ny - 1; j++) {
      const cx = op.cLon[j], cs = op.cSouth[j], cn = op.cNorth[j];
      const cc = cv - 2 * cx - cs - cn;
      const row = k * plane + j * nx;
      for (let c = row + 1; c < row + nx - 1; c++) {
        out[c] = cc * omega[c] + cx * (omega[c - 1] + omega[c + 1]) + cs * omega[c - nx] + cn * omega[c + nx]
          + cb * omega[c - plane] + ca * omega[c + plane];
      }
    }
  }
  return out;
}

/** Relative residual ||A omega - F||_2 / ||F||_2 over the interior unknowns (0 when F = 0 and A omega = 0). */
export function relativeResidual(op: OmegaOperator, omega: Float64Array, rhs: Float64Array, work?: Float64Array): number {
  const { nx, ny, nz } = op.g;
  const plane = nx * ny;
  const ax = applyOmegaOperator(op, omega, work ?? new Float64Array(omega.length));
  let num = 0, den = 0;
  for (let k = 1; k < nz - 1; k++) {
    for (let j = 1; j < ny - 1; j++) {
      const row = k * plane + j * nx;
      for (let c = row + 1; c < row + nx - 1; c++) {
        const d = ax[c] - rhs[c];
        num += d * d;
        den += rhs[c] * rhs[c];
      }
    }
  }
  if (den === 0) return num === 0 ? 0 : Infinity;
  return Math.sqrt(num / den);
}

export interface AssembledSystem {
  /** number of unknowns (interior points), numbered k-major then j then i over the interior */
  size: number;
  rows: Int32Array;
  cols: Int32Array;
  values: Float64Array;
  /** full-grid index of each unknown */
  gridIndex: Int32Array;
}

/** The discrete operator as a sparse matrix in coordinate (COO) form over the interior unknowns. */
export function assembleOmegaSystem(op: OmegaOperator): AssembledSystem {
  const { nx, ny, nz } = op.g;
  const nxi = nx - 2, nyi = ny - 2, nzi = nz - 2;
  const size = nxi * nyi * nzi;
  const unknown = (k: number, j: number, i: number) => ((k - 1) * nyi + (j - 1)) * nxi + (i - 1);
  const rows: number[] = [], cols: number[] = [], values: number[] = [];
  const gridIndex = new Int32Array(size);
  for (let k = 1; k < nz - 1; k++) {
    for (let j = 1; j < ny - 1; j++) {
      for (let i = 1; i < nx - 1; i++) {
        const r = unknown(k, j, i);
        gridIndex[r] = (k * ny + j) * nx + i;
        const cx = op.cLon[j], cs = op.cSouth[j], cn = op.cNorth[j], cb = op.cBelow[k], ca = op.cAbove[k];
        const entries: [number, number, number, number][] = [
          [k, j, i, -(cb + ca) - 2 * cx - cs - cn],
          [k, j, i - 1, cx], [k, j, i + 1, cx], [k, j - 1, i, cs], [k, j + 1, i, cn], [k - 1, j, i, cb], [k + 1, j, i, ca],
        ];
        for (const [kk, jj, ii, v] of entries) {
          if (kk < 1 || kk > nz - 2 || jj < 1 || jj > ny - 2 || ii < 1 || ii > nx - 2) continue;
          rows.push(r); cols.push(unknown(kk, jj, ii)); values.push(v);
        }
      }
    }
  }
  return { size, rows: Int32Array.from(rows), cols: Int32Array.from(cols), values: Float64Array.from(values), gridIndex };
}
