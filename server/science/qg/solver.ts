/**
 * Exact fast direct solver of the discrete QG omega equation A omega = F (operator.ts) with
 * homogeneous Dirichlet boundaries. With f0 constant and sigma = sigma(p) the operator is
 * separable (SCIENCE.md section 2), so the solve is three exact transforms:
 *  1. vertical: project on the eigenvectors of the interior vertical operator (eigen.ts);
 *  2. longitude: the Dirichlet second difference is diagonalised by the DST-I (fft.ts), with
 *     eigenvalues -4 sin^2(pi s / (2(n+1))) / dlon^2, because cos(lat) only scales it per row;
 *  3. latitude: one tridiagonal system per (vertical mode, sine mode), solved by the Thomas
 *     algorithm (diagonally dominant since both eigenvalues are negative: stable without pivoting).
 * Method: the matrix-decomposition (fast Poisson) approach of Buzbee, Golub and Nielson (1970),
 * SIAM J. Numer. Anal. 7, 627-656. Cost O(N (m + log nx)) for N unknowns and m interior levels.
 * Build one OmegaSolver per grid and reuse it across steps: buffers and the FFT plan are
 * allocated once, the vertical modes are recomputed only when sigma changes.
 */
import { DstI } from './fft.ts';
import { verticalModes, type VerticalModes } from './eigen.ts';
import { zeroBoundary, type QgGeometry } from './grid.ts';
import { omegaOperator, relativeResidual, type OmegaOperator } from './operator.ts';

export interface SolveReport {
  /** ||A omega - F|| / ||F|| of the discrete system */
  residual: number;
  /** wall time of the solve alone, ms */
  solveMs: number;
}

export class OmegaSolver {
  readonly g: QgGeometry;
  private op: OmegaOperator | null = null;
  private modes: VerticalModes | null = null;
  private readonly nxi: number;
  private readonly nyi: number;
  private readonly dst: DstI;
  /** per sine mode s: eigenvalue of the longitude second difference times dlon^2 */
  private readonly lonEigen: Float64Array;
  private readonly spectral: Float64Array;
  private readonly thomasC: Float64Array;
  private readonly work: Float64Array;

  constructor(g: QgGeometry) {
    this.g = g;
    this.nxi = g.nx - 2;
    this.nyi = g.ny - 2;
    const m = g.nz - 2;
    this.dst = new DstI(this.nxi, this.nyi);
    this.lonEigen = new Float64Array(this.nxi);
    for (let s = 1; s <= this.nxi; s++) {
      const sn = Math.sin((Math.PI * s) / (2 * (this.nxi + 1)));
      this.lonEigen[s - 1] = -4 * sn * sn;
    }
    this.spectral = new Float64Array(m * this.nyi * this.nxi);
    this.thomasC = new Float64Array(this.nyi * this.nxi);
    this.work = new Float64Array(g.nx * g.ny * g.nz);
  }

  /** Sets sigma(p) (m2 Pa-2 s-2, one per level); recomputes the vertical modes only if it changed. */
  setStability(sigma: Float64Array): void {
    const current = this.op?.sigma;
    if (current && current.length === sigma.length && current.every((s, k) => s === sigma[k])) return;
    this.op = omegaOperator(this.g, sigma);
    this.modes = verticalModes(this.op);
  }

  get operator(): OmegaOperator {
    if (!this.op) throw new Error('OmegaSolver: call setStability(sigma) before solving');
    return this.op;
  }

  get verticalModes(): VerticalModes {
    if (!this.modes) throw new Error('OmegaSolver: call setStability(sigma) before solving');
    return this.modes;
  }

  /** Solves A omega = F (full-grid arrays, F read on interior points) and reports the residual. */
  solve(rhs: Float64Array, out = new Float64Array(rhs.length)): { omega: Float64Array } & SolveReport {
    const start = performance.now();
    this.solveInto(rhs, out);
    const solveMs = performance.now() - start;
    const residual = relativeResidual(this.operator, out, rhs, this.work);
    return { omega: out, residual, solveMs };
  }

  /** The solve alone, no residual: omega = A^-1 F, zero on the boundary. */
  solveInto(rhs: Float64Array, out: Float64Array): Float64Array {
    const modes = this.verticalModes;
    if (rhs.length !== this.work.length || out.length !== this.work.length) {
      throw new RangeError(`solve: fields must have ${this.work.length} values`);
    }
    this.projectOnModes(rhs, modes);
    const rows = this.nyi;
    for (let q = 0; q < modes.m; q++) this.dst.transformRows(this.spectral, q * rows * this.nxi);
    for (let q = 0; q < modes.m; q++) this.solveLatitude(q, modes.lambda[q]);
    const inverseScale = 2 / (this.nxi + 1);
    for (let q = 0; q < modes.m; q++) this.dst.transformRows(this.spectral, q * rows * this.nxi, inverseScale);
    this.expandModes(out, modes);
    return out;
  }

  /** spectral[q][j][i] = sum_k V^-1[q][k] F[k+1][j+1][i+1]; row by row so the m source rows stay in cache. */
  private projectOnModes(rhs: Float64Array, modes: VerticalModes): void {
    const { nx, ny } = this.g;
    const { nxi, nyi, spectral } = this;
    const plane = nx * ny, block = nxi * nyi;
    for (let j = 0; j < nyi; j++) {
      const src0 = plane + (j + 1) * nx + 1;
      for (let q = 0; q < modes.m; q++) {
        combineRows(spectral, q * block + j * nxi, modes.vInv, q * modes.m, 1, rhs, src0, plane, modes.m, nxi);
      }
    }
  }

  /** out[k+1][j+1][i+1] = sum_q V[k][q] spectral[q][j][i]; boundary zero. */
  private expandModes(out: Float64Array, modes: VerticalModes): void {
    const { nx, ny } = this.g;
    const { nxi, nyi, spectral } = this;
    const plane = nx * ny, block = nxi * nyi;
    zeroBoundary(out, this.g);
    for (let j = 0; j < nyi; j++) {
      const dst0 = plane + (j + 1) * nx + 1;
      for (let k = 0; k < modes.m; k++) {
        combineRows(out, dst0 + k * plane, modes.v, k * modes.m, 1, spectral, j * nxi, block, modes.m, nxi);
      }
    }
  }

  /** Thomas algorithm along latitude for every sine mode at once (inner loop over s, contiguous). */
  private solveLatitude(q: number, lambda: number): void {
    const op = this.operator;
    const { nxi, nyi, spectral, thomasC: cp, lonEigen } = this;
    const d = q * nxi * nyi;
    for (let jj = 0; jj < nyi; jj++) {
      const j = jj + 1;
      const cs = op.cSouth[j], cn = op.cNorth[j], cx = op.cLon[j];
      const base = lambda - cs - cn;
      const row = jj * nxi, prev = row - nxi;
      for (let s = 0; s < nxi; s++) {
        const b = base + cx * lonEigen[s];
        if (jj === 0) {
          const inv = 1 / b;
          cp[row + s] = cn * inv;
          spectral[d + row + s] *= inv;
        } else {
          const inv = 1 / (b - cs * cp[prev + s]);
          cp[row + s] = cn * inv;
          spectral[d + row + s] = (spectral[d + row + s] - cs * spectral[d + prev + s]) * inv;
        }
      }
    }
    for (let jj = nyi - 2; jj >= 0; jj--) {
      const row = jj * nxi, next = row + nxi;
      for (let s = 0; s < nxi; s++) spectral[d + row + s] -= cp[row + s] * spectral[d + next + s];
    }
  }
}

/**
 * dst[d + i] = sum_r coef[c0 + r * cStride] * src[s0 + r * sStride + i], i < len, r < count.
 * Four source rows per pass halve the loads and stores of the destination row.
 */
function combineRows(
  dst: Float64Array, d: number, coef: Float64Array, c0: number, cStride: number,
  src: Float64Array, s0: number, sStride: number, count: number, len: number,
): void {
  let r = 0;
  if (count >= 4) {
    const a0 = coef[c0], a1 = coef[c0 + cStride], a2 = coef[c0 + 2 * cStride], a3 = coef[c0 + 3 * cStride];
    const p0 = s0, p1 = p0 + sStride, p2 = p1 + sStride, p3 = p2 + sStride;
    for (let i = 0; i < len; i++) dst[d + i] = a0 * src[p0 + i] + a1 * src[p1 + i] + a2 * src[p2 + i] + a3 * src[p3 + i];
    r = 4;
  } else {
    dst.fill(0, d, d + len);
  }
  for (; r + 3 < count; r += 4) {
    const a0 = coef[c0 + r * cStride], a1 = coef[c0 + (r + 1) * cStride];
    const a2 = coef[c0 + (r + 2) * cStride], a3 = coef[c0 + (r + 3) * cStride];
    const p0 = s0 + r * sStride, p1 = p0 + sStride, p2 = p1 + sStride, p3 = p2 + sStride;
    for (let i = 0; i < len; i++) dst[d + i] += a0 * src[p0 + i] + a1 * src[p1 + i] + a2 * src[p2 + i] + a3 * src[p3 + i];
  }
  for (; r < count; r++) {
    const a0 = coef[c0 + r * cStride], p0 = s0 + r * sStride;
    for (let i = 0; i < len; i++) dst[d + i] += a0 * src[p0 + i];
  }
}
