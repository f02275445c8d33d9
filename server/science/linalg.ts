/**
 * Small dense linear algebra for the science chain (row-major Float64Array matrices).
 * Only what the ensemble clustering needs: the eigen-decomposition of a small symmetric
 * matrix (the members x members Gram matrix of the EOF analysis).
 */

export class LinalgInputError extends Error {
  constructor(message: string) {
    super(message);
    this.name = 'LinalgInputError';
  }
}

export interface SymmetricEigen {
  /** eigenvalues, descending */
  values: Float64Array;
  /** vectors[j] is the unit eigenvector of values[j]; largest-magnitude component positive */
  vectors: Float64Array[];
  /** number of Jacobi sweeps used */
  sweeps: number;
}

const EPS = 2 ** -52;
const MAX_SWEEPS = 60;

/**
 * Eigen-decomposition A = V diag(values) V^T of a real symmetric n x n matrix (row-major).
 *
 * Method: cyclic Jacobi rotations (Jacobi 1846; Rutishauser 1966, Numer. Math. 9; Golub and
 * Van Loan, Matrix Computations, the cyclic Jacobi method with the stable 2x2 symmetric
 * Schur step). Chosen over QR iteration because it is short, unconditionally convergent, and
 * yields eigenvectors orthonormal to machine precision, which the EOF patterns inherit.
 * A rotation is skipped when |a_pq| <= eps * sqrt(|a_pp a_qq|) (the relative criterion of
 * Demmel and Veselic 1992, SIAM J. Matrix Anal. Appl. 13) or when a_pq is below
 * eps^2 ||A||_F, which cannot change the result at double precision; the sweeps stop when a
 * whole sweep skips every pair.
 * Cost O(n^3) per sweep, typically 6-10 sweeps; meant for n up to a few hundred.
 */
export function symmetricEigen(matrix: Float64Array, n: number): SymmetricEigen {
  if (!Number.isInteger(n) || n < 1) throw new LinalgInputError(`symmetricEigen: size ${n} must be a positive integer`);
  if (matrix.length !== n * n) throw new LinalgInputError(`symmetricEigen: ${matrix.length} entries for a ${n} x ${n} matrix`);
  const a = Float64Array.from(matrix);
  let frobenius2 = 0;
  for (let i = 0; i < n; i++) {
    for (let j = 0; j < n; j++) {
      const v = a[i * n + j];
      if (!Number.isFinite(v)) throw new LinalgInputError(`symmetricEigen: entry (${i}, ${j}) is ${v}`);
      if (Math.abs(v - a[j * n + i]) > 1e-12 * Math.max(Math.abs(v), Math.abs(a[j * n + i]), Number.MIN_VALUE)) {
        throw new LinalgInputError(`symmetricEigen: matrix is not symmetric at (${i}, ${j})`);
      }
      frobenius2 += v * v;
    }
  }
  const floor = EPS * EPS * Math.sqrt(frobenius2);
  const v = new Float64Array(n * n);
  for (let i = 0; i < n; i++) v[i * n + i] = 1;

  let sweeps = 0;
  for (;;) {
    let rotations = 0;
    for (let p = 0; p < n - 1; p++) {
      for (let q = p + 1; q < n; q++) {
        const apq = a[p * n + q];
        const app = a[p * n + p], aqq = a[q * n + q];
        if (Math.abs(apq) <= floor || Math.abs(apq) <= EPS * Math.sqrt(Math.abs(app * aqq))) continue;
        rotate(a, v, n, p, q);
        rotations++;
      }
    }
    sweeps++;
    if (rotations === 0) break;
    if (sweeps >= MAX_SWEEPS) throw new Error(`symmetricEigen: no convergence after ${MAX_SWEEPS} Jacobi sweeps`);
  }
  return sortedEigenpairs(a, v, n, sweeps);
}

/** One Jacobi rotation J(p, q, theta) that zeroes a_pq: A <- J^T A J, V <- V J. */
function rotate(a: Float64Array, v: Float64Array, n: number, p: number, q: number): void {
  const apq = a[p * n + q];
  const tau = (a[q * n + q] - a[p * n + p]) / (2 * apq);
  // smaller root of t^2 + 2 tau t - 1 = 0: rotation angle |theta| <= pi/4, stable
  const t = (tau >= 0 ? 1 : -1) / (Math.abs(tau) + Math.sqrt(1 + tau * tau));
  const c = 1 / Math.sqrt(1 + t * t);
  const s = t * c;
  for (let k = 0; k < n; k++) {
    const akp = a[k * n + p], akq = a[k * n + q];
    a[k * n + p] = c * akp - s * akq;
    a[k * n + q] = s * akp + c * akq;
  }
  for (let k = 0; k < n; k++) {
    const apk = a[p * n + k], aqk = a[q * n + k];
    a[p * n + k] = c * apk - s * aqk;
    a[q * n + k] = s * apk + c * aqk;
  }
  a[p * n + q] = 0;
  a[q * n + p] = 0;
  for (let k = 0; k < n; k++) {
    const vkp = v[k * n + p], vkq = v[k * n + q];
    v[k * n + p] = c * vkp - s * vkq;
    v[k * n + q] = s * vkp + c * vkq;
  }
}

function sortedEigenpairs(a: Float64Array, v: Float64Array, n: number, sweeps: number): SymmetricEigen {
  // stable sort: equal eigenvalues keep their Jacobi order, so the output is deterministic
  const order = Array.from({ length: n }, (_, i) => i).sort((i, j) => a[j * n + j] - a[i * n + i] || i - j);
  const values = Float64Array.from(order, (i) => a[i * n + i]);
  const vectors = order.map((col) => {
    const vec = new Float64Array(n);
    let largest = 0;
    for (let k = 0; k < n; k++) {
      vec[k] = v[k * n + col];
      if (Math.abs(vec[k]) > Math.abs(vec[largest])) largest = k;
    }
    if (vec[largest] < 0) for (let k = 0; k < n; k++) vec[k] = -vec[k];
    return vec;
  });
  return { values, vectors, sweeps };
}
