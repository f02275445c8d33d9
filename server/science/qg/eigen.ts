/**
 * Vertical modes of the QG operator: eigen-decomposition of the interior vertical operator
 * M = diag(f0^2/sigma_k) D2 on uneven levels. M is not symmetric, but M = D S with D diagonal
 * positive and S symmetric (the three-point second difference), so B = D^(1/2) S D^(1/2) is
 * symmetric and similar to M: M = V Lambda V^-1 with V = D^(1/2) Q, V^-1 = Q^T D^(-1/2), where
 * B = Q Lambda Q^T. B is decomposed with the cyclic Jacobi method of ../linalg.ts (Golub and Van Loan,
 * Matrix Computations, chapter on the symmetric eigenvalue problem, Jacobi methods), accurate to round-off for the small nz of a model run.
 */
import { symmetricEigen } from '../linalg.ts';
import type { OmegaOperator } from './operator.ts';

export interface VerticalModes {
  /** number of interior levels m = nz - 2 */
  m: number;
  /** eigenvalues of M, Pa-2 ... times f0^2/sigma: m-2 (all negative) */
  lambda: Float64Array;
  /** V (m x m, row-major, columns are modes) and V^-1 */
  v: Float64Array;
  vInv: Float64Array;
  /** max |V Lambda V^-1 - M| / max |M|: the check that the decomposition reproduces the operator */
  reconstructionError: number;
}

/** The interior vertical operator M (m x m, row-major) of an omega operator. */
export function verticalOperatorMatrix(op: OmegaOperator): Float64Array {
  const m = op.g.nz - 2;
  const mat = new Float64Array(m * m);
  for (let r = 0; r < m; r++) {
    const k = r + 1;
    mat[r * m + r] = -(op.cBelow[k] + op.cAbove[k]);
    if (r > 0) mat[r * m + r - 1] = op.cBelow[k];
    if (r < m - 1) mat[r * m + r + 1] = op.cAbove[k];
  }
  return mat;
}

/** Vertical modes of the operator, verified against the operator itself. */
export function verticalModes(op: OmegaOperator): VerticalModes {
  const m = op.g.nz - 2;
  const mat = verticalOperatorMatrix(op);
  // D: row scale of M; M[r][r+1] = d_r / h_above, so d_r = (cBelow + cAbove) / (1/hb + 1/ha)
  const p = op.g.levels;
  const d = new Float64Array(m);
  for (let r = 0; r < m; r++) {
    const k = r + 1;
    d[r] = op.cAbove[k] * (p[k] - p[k + 1]);
  }
  const sym = new Float64Array(m * m);
  for (let r = 0; r < m; r++) {
    sym[r * m + r] = mat[r * m + r];
    if (r < m - 1) {
      const off = Math.sqrt(mat[r * m + r + 1] * mat[(r + 1) * m + r]);
      sym[r * m + r + 1] = off;
      sym[(r + 1) * m + r] = off;
    }
  }
  const { values, vectors: modes } = symmetricEigen(sym, m);
  // modes[c] is the c-th unit eigenvector; as a row-major matrix its entries sit in column c.
  const vectors = new Float64Array(m * m);
  modes.forEach((mode, c) => mode.forEach((x, r) => (vectors[r * m + c] = x)));
  const v = new Float64Array(m * m), vInv = new Float64Array(m * m);
  for (let r = 0; r < m; r++) {
    const sq = Math.sqrt(d[r]);
    for (let c = 0; c < m; c++) {
      v[r * m + c] = sq * vectors[r * m + c];
      vInv[c * m + r] = vectors[r * m + c] / sq;
    }
  }
  let maxErr = 0, maxM = 0;
  for (let r = 0; r < m; r++) {
    for (let c = 0; c < m; c++) {
      let s = 0;
      for (let q = 0; q < m; q++) s += v[r * m + q] * values[q] * vInv[q * m + c];
      maxErr = Math.max(maxErr, Math.abs(s - mat[r * m + c]));
      maxM = Math.max(maxM, Math.abs(mat[r * m + c]));
    }
  }
  const reconstructionError = maxErr / maxM;
  if (!(reconstructionError < 1e-10)) {
    throw new Error(`vertical mode decomposition does not reproduce the operator (relative error ${reconstructionError})`);
  }
  return { m, lambda: values, v, vInv, reconstructionError };
}
