/**
 * Benchmark of the exact QG omega solver: `npm run bench:omega`.
 * Prints, for a 241x161x12 grid (0.25 deg over 60 x 40 deg, 30..70N) and a 121x81x12 grid (0.5 deg):
 * the median time per solve, the relative residual, the time of one application of the
 * discrete operator and the solve cost in operator applications; SciPy's sparse direct solve
 * (scipy.sparse.linalg.spsolve via the Debian /usr/bin/python3) of the same assembled system on
 * the smaller grid; and the throughput of full diagnoses through the worker pool, extrapolated
 * to a 51-member, 41-step ensemble.
 */
import { execFileSync } from 'node:child_process';
import fs from 'node:fs';
import os from 'node:os';
import path from 'node:path';
import { OmegaPool } from '../../server/jobs/omega-pool.ts';
import {
  applyOmegaOperator, assembleOmegaSystem, diagnose, OmegaSolver, qgGeometry, type QgAxes,
} from '../../server/science/qg/index.ts';
import { DRY_AIR_GAS_CONSTANT as R, EARTH_ANGULAR_VELOCITY, EARTH_RADIUS } from '../../server/science/constants.ts';

const LEVELS = [100000, 92500, 85000, 70000, 60000, 50000, 40000, 30000, 25000, 20000, 15000, 10000];
const TARGET = { solveMs: 60, residual: 1e-10, scipyRatio: 300, applications: 20 };

function gridAxes(step: number): QgAxes {
  const ny = Math.round(40 / step) + 1, nx = Math.round(60 / step) + 1;
  return {
    lat: Float64Array.from({ length: ny }, (_, j) => 30 + j * step),
    lon: Float64Array.from({ length: nx }, (_, i) => -30 + i * step),
    levels: Float64Array.from(LEVELS),
  };
}

/** Balanced synthetic fields: a standard-like basic state, westerly shear and a wave (T hydrostatic with Phi). */
function syntheticFields(ax: QgAxes, phase: number): { z: Float32Array; t: Float32Array } {
  const nx = ax.lon.length, ny = ax.lat.length, nz = ax.levels.length;
  const f0 = 2 * EARTH_ANGULAR_VELOCITY * Math.sin((50 * Math.PI) / 180);
  const z = new Float32Array(nx * ny * nz), t = new Float32Array(nx * ny * nz);
  for (let k = 0; k < nz; k++) {
    const s = Math.log(1e5 / ax.levels[k]);
    const tBar = 288 * Math.exp(-0.19 * s);
    const phiBar = (R * 288 / 0.19) * (1 - Math.exp(-0.19 * s));
    for (let j = 0; j < ny; j++) {
      const lat = (ax.lat[j] * Math.PI) / 180, dl = lat - (50 * Math.PI) / 180;
      for (let i = 0; i < nx; i++) {
        const lon = (ax.lon[i] * Math.PI) / 180;
        const shape = Math.cos(7 * lon - phase) * Math.exp(-((dl / 0.17) ** 2));
        const n = (k * ny + j) * nx + i;
        z[n] = phiBar - f0 * EARTH_RADIUS * (10 + 8 * s) * dl - (300 + 500 * s) * shape;
        t[n] = (R * tBar - f0 * EARTH_RADIUS * 8 * dl - 500 * shape) / R;
      }
    }
  }
  return { z, t };
}

function median(xs: number[]): number {
  const s = [...xs].sort((a, b) => a - b);
  return s.length % 2 ? s[(s.length - 1) / 2] : 0.5 * (s[s.length / 2 - 1] + s[s.length / 2]);
}

/**
 * Solve and operator application are timed interleaved (one solve, then one application), so
 * that both see the same load on a shared machine; medians and minima are both reported.
 */
function benchGrid(step: number, repeats: number) {
  const ax = gridAxes(step);
  const g = qgGeometry(ax);
  const { z, t } = syntheticFields(ax, 0);
  const d = diagnose({ axes: ax, z, t });
  const solver = new OmegaSolver(g);
  solver.setStability(d.sigma);
  const rhs = Float64Array.from(d.forcing.vorticity, (v, n) => v + d.forcing.thickness[n]);
  const out = new Float64Array(rhs.length), work = new Float64Array(rhs.length);
  const solveTimes: number[] = [], applyTimes: number[] = [];
  let residual = 0;
  for (let r = 0; r < repeats; r++) {
    const res = solver.solve(rhs, out);
    solveTimes.push(res.solveMs);
    residual = Math.max(residual, res.residual);
    const t0 = performance.now();
    applyOmegaOperator(solver.operator, out, work);
    applyTimes.push(performance.now() - t0);
  }
  const solveMs = median(solveTimes), applyMs = median(applyTimes);
  const solveMin = Math.min(...solveTimes), applyMin = Math.min(...applyTimes);
  return {
    g, solver, rhs, omega: out.slice(), solveMs, solveMin, residual, applyMs, applyMin,
    applications: solveMs / applyMs, applicationsMin: solveMin / applyMin,
  };
}

const SCIPY = `
import sys, time, json, numpy as np, scipy.sparse as sp, scipy.sparse.linalg as sla
d, n = sys.argv[1], int(sys.argv[2])
rows = np.fromfile(d + '/rows.i32', dtype='<i4'); cols = np.fromfile(d + '/cols.i32', dtype='<i4')
vals = np.fromfile(d + '/vals.f64', dtype='<f8'); rhs = np.fromfile(d + '/rhs.f64', dtype='<f8')
A = sp.coo_matrix((vals, (rows, cols)), shape=(n, n)).tocsc()
t0 = time.perf_counter(); x = sla.spsolve(A, rhs); ms = 1000 * (time.perf_counter() - t0)
x.astype('<f8').tofile(d + '/x.f64')
print(json.dumps({"ms": ms}))
`;

function scipyBench(b: ReturnType<typeof benchGrid>): { ms: number; relDiff: number } {
  const sys = assembleOmegaSystem(b.solver.operator);
  const dir = fs.mkdtempSync(path.join(os.tmpdir(), 'liftwise-'));
  try {
    fs.writeFileSync(path.join(dir, 'rows.i32'), Buffer.from(sys.rows.buffer));
    fs.writeFileSync(path.join(dir, 'cols.i32'), Buffer.from(sys.cols.buffer));
    fs.writeFileSync(path.join(dir, 'vals.f64'), Buffer.from(sys.values.buffer));
    fs.writeFileSync(path.join(dir, 'rhs.f64'), Buffer.from(Float64Array.from(sys.gridIndex, (n) => b.rhs[n]).buffer));
    const outText = execFileSync('/usr/bin/python3', ['-c', SCIPY, dir, String(sys.size)], { encoding: 'utf8' });
    const x = new Float64Array(new Uint8Array(fs.readFileSync(path.join(dir, 'x.f64'))).buffer);
    let num = 0, den = 0;
    sys.gridIndex.forEach((n, r) => { num += (x[r] - b.omega[n]) ** 2; den += x[r] ** 2; });
    return { ms: JSON.parse(outText).ms, relDiff: Math.sqrt(num / den) };
  } finally {
    fs.rmSync(dir, { recursive: true, force: true });
  }
}

async function poolBench(step: number, tasks: number) {
  const pool = new OmegaPool();
  const ax = gridAxes(step);
  const fields = Array.from({ length: tasks }, (_, n) => syntheticFields(ax, 0.1 * n));
  const copyAxes = () => ({ lat: ax.lat.slice(), lon: ax.lon.slice(), levels: ax.levels.slice() });
  try {
    // warm-up: one task per thread (worker start-up, tsx loader, JIT)
    await Promise.all(Array.from({ length: pool.threads }, (_, n) => pool.run({ member: n, step: 0, axes: copyAxes(), ...syntheticFields(ax, 0) })));
    const t0 = performance.now();
    const results = await Promise.all(fields.map((f, n) => pool.run({ member: n, step: 6, axes: copyAxes(), z: f.z, t: f.t })));
    const seconds = (performance.now() - t0) / 1000;
    const solves = results.reduce((s, r) => s + r.solves, 0);
    return { threads: pool.threads, tasks, seconds, solves, worstResidual: Math.max(...results.map((r) => r.residual.total)) };
  } finally {
    await pool.destroy();
  }
}

const mark = (ok: boolean) => (ok ? 'ok' : 'MISSED');

async function main(): Promise<void> {
  console.log(`QG omega solver benchmark (node ${process.version}, ${os.availableParallelism()} cores, load ${os.loadavg()[0].toFixed(2)})`);
  const large = benchGrid(0.25, 31);
  const small = benchGrid(0.5, 41);
  for (const [name, b] of [['241x161x12 (0.25 deg)', large], ['121x81x12 (0.5 deg)', small]] as const) {
    console.log(`\n${name}: ${b.g.nx * b.g.ny * b.g.nz} points`);
    console.log(`  solve                 median ${b.solveMs.toFixed(2)} ms, min ${b.solveMin.toFixed(2)} ms`);
    console.log(`  relative residual     ${b.residual.toExponential(2)}  [target <= ${TARGET.residual}: ${mark(b.residual <= TARGET.residual)}]`);
    console.log(`  one operator apply    median ${b.applyMs.toFixed(3)} ms, min ${b.applyMin.toFixed(3)} ms`);
    console.log(`  solve cost            ${b.applications.toFixed(1)} operator applications (medians; ${b.applicationsMin.toFixed(1)} from minima)  [target <= ${TARGET.applications}: ${mark(b.applications <= TARGET.applications)}]`);
  }
  console.log(`\n  large grid single-threaded solve target <= ${TARGET.solveMs} ms: ${mark(large.solveMs <= TARGET.solveMs)}`);
  const sci = scipyBench(small);
  const ratio = sci.ms / small.solveMs;
  console.log(`\nSciPy spsolve, same assembled system, 121x81x12: ${sci.ms.toFixed(0)} ms (difference to ours ${sci.relDiff.toExponential(1)} relative)`);
  console.log(`  ours is ${ratio.toFixed(0)}x faster  [target >= ${TARGET.scipyRatio}x: ${mark(ratio >= TARGET.scipyRatio)}]`);
  const tasks = 16;
  const p = await poolBench(0.25, tasks);
  const perSecond = p.tasks / p.seconds;
  const ensemble = 51 * 41;
  console.log(`\nPool (${p.threads} threads), full diagnosis per (member, step) on 241x161x12 (forcings + 3 solves + residuals):`);
  console.log(`  ${p.tasks} tasks in ${p.seconds.toFixed(2)} s: ${perSecond.toFixed(2)} diagnoses/s, ${(p.solves / p.seconds).toFixed(1)} solves/s (worst residual ${p.worstResidual.toExponential(1)})`);
  console.log(`  extrapolated from ${p.tasks} tasks: 51 members x 41 steps = ${ensemble} diagnoses in ~${(ensemble / perSecond / 60).toFixed(1)} min`);
}

main().catch((err) => {
  console.error(err);
  process.exit(1);
});
