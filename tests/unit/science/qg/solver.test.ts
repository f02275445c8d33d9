/**
 * The exact separable solver: discrete manufactured solutions (recovered to round-off), the
 * vertical decomposition, FFT/DST against their definitions, and second-order convergence on a
 * continuous manufactured solution on the sphere with uneven levels (SCIENCE.md section 2).
 */
import { describe, expect, it } from 'vitest';
import {
  applyOmegaOperator, assembleOmegaSystem, DstI, FftPlan, OmegaSolver, qgGeometry, verticalModes, verticalOperatorMatrix, zeroBoundary,
} from '../../../../server/science/qg/index.ts';
import { EARTH_RADIUS } from '../../../../server/science/constants.ts';
import { axes, logLevels, relativeL2, STANDARD_LEVELS } from './analytic.ts';

const sigmaOf = (p: number) => 2e-6 * (50000 / p) ** 2;

describe('FFT and DST-I (definition: X_k = sum x_j exp(-2 pi i jk/n); DST-I X_s = sum x_i sin(pi s i/(n+1)))', () => {
  it.each([1, 2, 3, 5, 6, 7, 12, 15, 16, 29, 38, 60, 240])('complex FFT of length %i matches the direct sum', (n) => {
    const re = Float64Array.from({ length: n }, (_, j) => Math.sin(1.3 * j + 0.2) + 0.1 * j);
    const im = Float64Array.from({ length: n }, (_, j) => Math.cos(0.7 * j * j));
    const fr = re.slice(), fi = im.slice();
    new FftPlan(n).forward(fr, fi);
    let err = 0, scale = 0;
    for (let k = 0; k < n; k++) {
      let sr = 0, si = 0;
      for (let j = 0; j < n; j++) {
        const a = (-2 * Math.PI * j * k) / n;
        sr += re[j] * Math.cos(a) - im[j] * Math.sin(a);
        si += re[j] * Math.sin(a) + im[j] * Math.cos(a);
      }
      err = Math.max(err, Math.hypot(sr - fr[k], si - fi[k]));
      scale = Math.max(scale, Math.hypot(sr, si));
    }
    expect(err / scale).toBeLessThan(1e-12);
  });

  it.each([[1, 1], [4, 3], [14, 5], [28, 4], [37, 7], [119, 2]])('DST-I of length %i over %i rows matches the direct sum and inverts', (n, rows) => {
    const x = Float64Array.from({ length: n * rows }, (_, i) => Math.sin(0.37 * i * i + 1));
    const y = x.slice();
    const dst = new DstI(n, rows);
    dst.transformRows(y, 0);
    for (let r = 0; r < rows; r++) {
      for (let s = 1; s <= n; s++) {
        let acc = 0;
        for (let i = 1; i <= n; i++) acc += x[r * n + i - 1] * Math.sin((Math.PI * s * i) / (n + 1));
        expect(y[r * n + s - 1]).toBeCloseTo(acc, 10);
      }
    }
    dst.transformRows(y, 0, 2 / (n + 1));
    expect(relativeL2(y, x)).toBeLessThan(1e-13);
  });
});

describe('vertical modes', () => {
  it('V Lambda V^-1 reproduces the uneven-level operator (f0^2/sigma) d2/dp2 and all eigenvalues are negative', () => {
    const g = qgGeometry(axes(35, 60, 0, 30, 1, STANDARD_LEVELS));
    const solver = new OmegaSolver(g);
    solver.setStability(Float64Array.from(STANDARD_LEVELS, sigmaOf));
    const modes = verticalModes(solver.operator);
    const m = modes.m;
    const mat = verticalOperatorMatrix(solver.operator);
    let err = 0, big = 0;
    for (let r = 0; r < m; r++) {
      for (let c = 0; c < m; c++) {
        let s = 0;
        for (let q = 0; q < m; q++) s += modes.v[r * m + q] * modes.lambda[q] * modes.vInv[q * m + c];
        err = Math.max(err, Math.abs(s - mat[r * m + c]));
        big = Math.max(big, Math.abs(mat[r * m + c]));
      }
    }
    expect(err / big).toBeLessThan(1e-12);
    expect(modes.reconstructionError).toBeLessThan(1e-12);
    expect(Math.max(...modes.lambda)).toBeLessThan(0);
    // the operator is not symmetric on uneven levels: the decomposition had to handle that
    expect(Math.abs(mat[1] - mat[m])).toBeGreaterThan(1e-3 * Math.abs(mat[1]));
  });
});

describe('discrete manufactured solutions (exact solver: recover to round-off)', () => {
  // odd sizes exercise every FFT path: radix 4/2/3/5, a generic prime (7) and Bluestein (19, 29)
  it.each([
    [35, 65, 0, 40, 1],    // nx 41 -> DST length 39, FFT 40
    [40, 58, -10, 26, 1],  // nx 37 -> FFT 36
    [40, 58, 0, 29, 1],    // nx 30 -> FFT 29 (prime: Bluestein)
    [40, 58, 0, 38, 1],    // nx 39 -> FFT 38 = 2 x 19 (Bluestein)
    [-70, -40, 100, 113, 1], // southern hemisphere, nx 14 -> FFT 13 (generic prime)
  ])('lat %i..%i lon %i..%i: A^-1 (A omega) = omega to 1e-10', (la0, la1, lo0, lo1, d) => {
    const ax = axes(la0, la1, lo0, lo1, d, STANDARD_LEVELS);
    const g = qgGeometry(ax);
    const solver = new OmegaSolver(g);
    solver.setStability(Float64Array.from(STANDARD_LEVELS, sigmaOf));
    const omega = zeroBoundary(new Float64Array(g.nx * g.ny * g.nz), g);
    for (let n = 0; n < omega.length; n++) omega[n] = Math.sin(0.37 * n) + 0.5 * Math.sin(0.011 * n);
    zeroBoundary(omega, g);
    const rhs = applyOmegaOperator(solver.operator, omega, new Float64Array(omega.length));
    const { omega: solved, residual } = solver.solve(rhs);
    expect(relativeL2(solved, omega)).toBeLessThan(1e-10);
    expect(residual).toBeLessThan(1e-12);
  });

  it('reuses one solver across changing sigma and stays exact', () => {
    const g = qgGeometry(axes(35, 60, 0, 30, 1, STANDARD_LEVELS));
    const solver = new OmegaSolver(g);
    for (const factor of [1, 3.7]) {
      solver.setStability(Float64Array.from(STANDARD_LEVELS, (p) => factor * sigmaOf(p)));
      const omega = zeroBoundary(Float64Array.from({ length: g.nx * g.ny * g.nz }, (_, n) => Math.cos(0.21 * n)), g);
      const rhs = applyOmegaOperator(solver.operator, omega, new Float64Array(omega.length));
      expect(relativeL2(solver.solve(rhs).omega, omega)).toBeLessThan(1e-10);
    }
  });
});

describe('continuous manufactured solution on the sphere, uneven levels: second-order convergence', () => {
  // omega = sin(pi x) sin(pi y) sin(pi s) in normalised lon, lat and s = ln(p_b/p); the analytic
  // right-hand side uses the spherical Laplacian and d2/dp2 (SCIENCE.md section 2).
  const la0 = 35, la1 = 65, lo0 = 0, lo1 = 40, pb = 100000, pt = 10000;
  const rad = Math.PI / 180, S = Math.log(pb / pt);
  function errorAt(step: number, nz: number): number {
    const levels = logLevels(nz, pb, pt);
    const g = qgGeometry(axes(la0, la1, lo0, lo1, step, levels));
    const Lx = (lo1 - lo0) * rad, Ly = (la1 - la0) * rad, a = EARTH_RADIUS;
    const sigma = Float64Array.from(levels, sigmaOf);
    const exact = new Float64Array(g.nx * g.ny * g.nz), rhs = new Float64Array(exact.length);
    for (let k = 0; k < g.nz; k++) {
      const p = levels[k], th = (Math.PI * Math.log(pb / p)) / S;
      const Z = Math.sin(th);
      const Zpp = -Math.sin(th) * (Math.PI / (S * p)) ** 2 + Math.cos(th) * (Math.PI / (S * p * p));
      for (let j = 0; j < g.ny; j++) {
        const phi = (la0 + j * step) * rad, y = (Math.PI * (phi - la0 * rad)) / Ly;
        const Y = Math.sin(y), Yp = (Math.PI / Ly) * Math.cos(y), Ypp = -((Math.PI / Ly) ** 2) * Math.sin(y);
        for (let i = 0; i < g.nx; i++) {
          const x = (Math.PI * i * step * rad) / Lx;
          const X = Math.sin(x), Xpp = -((Math.PI / Lx) ** 2) * Math.sin(x);
          const n = (k * g.ny + j) * g.nx + i;
          exact[n] = X * Y * Z;
          const lap = (Xpp * Y) / (a * a * Math.cos(phi) ** 2) + (X * (Ypp - Math.tan(phi) * Yp)) / (a * a);
          rhs[n] = lap * Z + ((g.f0 * g.f0) / sigma[k]) * X * Y * Zpp;
        }
      }
    }
    zeroBoundary(exact, g);
    const solver = new OmegaSolver(g);
    solver.setStability(sigma);
    const { omega, residual } = solver.solve(zeroBoundary(rhs, g));
    expect(residual).toBeLessThan(1e-10);
    let maxErr = 0;
    for (let n = 0; n < omega.length; n++) maxErr = Math.max(maxErr, Math.abs(omega[n] - exact[n]));
    return maxErr;
  }

  it('halving every spacing divides the max error by ~4 (observed order ~2)', () => {
    const e1 = errorAt(2, 7), e2 = errorAt(1, 13), e3 = errorAt(0.5, 25);
    const order1 = Math.log2(e1 / e2), order2 = Math.log2(e2 / e3);
    expect(e3).toBeLessThan(3e-3); // amplitude 1
    expect(order1).toBeGreaterThan(1.8);
    expect(order2).toBeGreaterThan(1.9);
    expect(order2).toBeLessThan(2.2);
  });
});

describe('assembled sparse system (the matrix handed to SciPy in tests/reference/qg)', () => {
  it('COO triplets times omega equal the operator applied to omega', () => {
    const g = qgGeometry(axes(40, 52, 10, 24, 1, STANDARD_LEVELS));
    const solver = new OmegaSolver(g);
    solver.setStability(Float64Array.from(STANDARD_LEVELS, sigmaOf));
    const omega = zeroBoundary(Float64Array.from({ length: g.nx * g.ny * g.nz }, (_, n) => Math.sin(0.13 * n) + 0.2), g);
    const direct = applyOmegaOperator(solver.operator, omega, new Float64Array(omega.length));
    const sys = assembleOmegaSystem(solver.operator);
    expect(sys.size).toBe((g.nx - 2) * (g.ny - 2) * (g.nz - 2));
    const product = new Float64Array(sys.size);
    for (let e = 0; e < sys.values.length; e++) product[sys.rows[e]] += sys.values[e] * omega[sys.gridIndex[sys.cols[e]]];
    const expected = Float64Array.from(sys.gridIndex, (n) => direct[n]);
    expect(relativeL2(product, expected)).toBeLessThan(1e-14);
  });
});
