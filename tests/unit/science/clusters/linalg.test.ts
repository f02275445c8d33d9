import { describe, expect, it } from 'vitest';
import { LinalgInputError, symmetricEigen } from '../../../../server/science/linalg.ts';
import { mulberry32 } from '../../../../server/science/random.ts';

function randomSymmetric(n: number, seed: number): Float64Array {
  const random = mulberry32(seed);
  const a = new Float64Array(n * n);
  for (let i = 0; i < n; i++) for (let j = 0; j <= i; j++) a[i * n + j] = a[j * n + i] = 2 * random() - 1;
  return a;
}

function maxReconstructionError(a: Float64Array, n: number, values: Float64Array, vectors: Float64Array[]): number {
  let worst = 0;
  for (let i = 0; i < n; i++) {
    for (let j = 0; j < n; j++) {
      let s = 0;
      for (let k = 0; k < n; k++) s += vectors[k][i] * values[k] * vectors[k][j];
      worst = Math.max(worst, Math.abs(s - a[i * n + j]));
    }
  }
  return worst;
}

function maxOrthonormalityError(vectors: Float64Array[]): number {
  let worst = 0;
  vectors.forEach((u, i) => vectors.forEach((v, j) => {
    let s = 0;
    for (let k = 0; k < u.length; k++) s += u[k] * v[k];
    worst = Math.max(worst, Math.abs(s - (i === j ? 1 : 0)));
  }));
  return worst;
}

describe('symmetricEigen (cyclic Jacobi; source: Golub and Van Loan, Matrix Computations)', () => {
  it('finds the hand-worked eigenpairs of [[2, 1], [1, 2]]: 3 along (1, 1)/sqrt 2, 1 along (1, -1)/sqrt 2', () => {
    const { values, vectors } = symmetricEigen(Float64Array.of(2, 1, 1, 2), 2);
    expect(values[0]).toBeCloseTo(3, 14);
    expect(values[1]).toBeCloseTo(1, 14);
    expect(vectors[0][0]).toBeCloseTo(Math.SQRT1_2, 14);
    expect(vectors[0][1]).toBeCloseTo(Math.SQRT1_2, 14);
    expect(vectors[1][0]).toBeCloseTo(Math.SQRT1_2, 14);
    expect(vectors[1][1]).toBeCloseTo(-Math.SQRT1_2, 14);
  });

  it('reproduces A = V L V^T to 1e-12 with orthonormal V on seeded random 40 x 40 matrices', () => {
    for (const seed of [1, 2, 3]) {
      const n = 40;
      const a = randomSymmetric(n, seed);
      const { values, vectors, sweeps } = symmetricEigen(a, n);
      expect(maxReconstructionError(a, n, values, vectors)).toBeLessThan(1e-12);
      expect(maxOrthonormalityError(vectors)).toBeLessThan(1e-12);
      for (let i = 1; i < n; i++) expect(values[i]).toBeLessThanOrEqual(values[i - 1]);
      expect(sweeps).toBeLessThan(20);
      // the trace is invariant under the rotations
      let trace = 0;
      for (let i = 0; i < n; i++) trace += a[i * n + i];
      expect(Math.abs(values.reduce((s, v) => s + v, 0) - trace)).toBeLessThan(1e-12);
    }
  });

  it('handles a rank-deficient Gram matrix (centred data, as in the EOF analysis) and repeated eigenvalues', () => {
    const random = mulberry32(7);
    const rows = 12, cols = 5;
    const x = Array.from({ length: rows }, () => Float64Array.from({ length: cols }, () => random()));
    for (let c = 0; c < cols; c++) {
      const mean = x.reduce((s, r) => s + r[c], 0) / rows;
      x.forEach((r) => { r[c] -= mean; });
    }
    const gram = new Float64Array(rows * rows);
    for (let i = 0; i < rows; i++) for (let j = 0; j < rows; j++) gram[i * rows + j] = x[i].reduce((s, v, c) => s + v * x[j][c], 0);
    const eig = symmetricEigen(gram, rows);
    expect(maxReconstructionError(gram, rows, eig.values, eig.vectors)).toBeLessThan(1e-12);
    expect(maxOrthonormalityError(eig.vectors)).toBeLessThan(1e-12);
    // rank <= 5 after centring: 7 eigenvalues vanish to round-off
    for (let i = cols; i < rows; i++) expect(Math.abs(eig.values[i])).toBeLessThan(1e-13);
    expect(eig.values[cols - 1]).toBeGreaterThan(1e-3);

    const identityPlusRankOne = new Float64Array(16);
    for (let i = 0; i < 4; i++) for (let j = 0; j < 4; j++) identityPlusRankOne[i * 4 + j] = (i === j ? 1 : 0) + 1;
    const rep = symmetricEigen(identityPlusRankOne, 4);
    expect(Array.from(rep.values).map((v) => Math.round(v * 1e12) / 1e12)).toEqual([5, 1, 1, 1]);
    expect(maxOrthonormalityError(rep.vectors)).toBeLessThan(1e-12);
  });

  it('makes the largest-magnitude component of each eigenvector positive', () => {
    const n = 15;
    const { vectors } = symmetricEigen(randomSymmetric(n, 11), n);
    for (const v of vectors) {
      const largest = v.reduce((best, x) => (Math.abs(x) > Math.abs(best) ? x : best), 0);
      expect(largest).toBeGreaterThan(0);
    }
  });

  it('needs one sweep and no rotation for a diagonal matrix', () => {
    const { values, sweeps } = symmetricEigen(Float64Array.of(1, 0, 0, 0, 3, 0, 0, 0, 2), 3);
    expect(Array.from(values)).toEqual([3, 2, 1]);
    expect(sweeps).toBe(1);
  });

  it('refuses non-symmetric, mis-sized and non-finite input with a clear message', () => {
    expect(() => symmetricEigen(Float64Array.of(1, 2, 3, 4), 2)).toThrow(/not symmetric at \(0, 1\)/);
    expect(() => symmetricEigen(Float64Array.of(1, 2, 3), 2)).toThrow(/3 entries for a 2 x 2/);
    expect(() => symmetricEigen(Float64Array.of(1, NaN, NaN, 1), 2)).toThrow(LinalgInputError);
    expect(() => symmetricEigen(new Float64Array(0), 0)).toThrow(/positive integer/);
  });
});
