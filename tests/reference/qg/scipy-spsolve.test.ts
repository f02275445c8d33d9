/**
 * The exact separable omega solver against an outside reference.
 * Reference tool: SciPy spsolve (scipy.sparse.linalg.spsolve, SuperLU) on the same assembled
 * sparse system (COO triplets + right-hand side), run with the Debian /usr/bin/python3.
 * Source of the system: SCIENCE.md section 2 (second-order centred differences on the sphere,
 * uneven pressure levels, homogeneous Dirichlet boundaries).
 */
import { execFileSync } from 'node:child_process';
import fs from 'node:fs';
import os from 'node:os';
import path from 'node:path';
import { describe, expect, it } from 'vitest';
import { assembleOmegaSystem, diagnose, OmegaSolver, qgGeometry, type QgGeometry } from '../../../server/science/qg/index.ts';
import { axes, balancedFields, poly, STANDARD_LEVELS } from '../../unit/science/qg/analytic.ts';

const PYTHON = '/usr/bin/python3';
const SCRIPT = `
import sys, numpy as np, scipy.sparse as sp, scipy.sparse.linalg as sla
d, n = sys.argv[1], int(sys.argv[2])
rows = np.fromfile(d + '/rows.i32', dtype='<i4'); cols = np.fromfile(d + '/cols.i32', dtype='<i4')
vals = np.fromfile(d + '/vals.f64', dtype='<f8'); rhs = np.fromfile(d + '/rhs.f64', dtype='<f8')
A = sp.coo_matrix((vals, (rows, cols)), shape=(n, n)).tocsc()
x = sla.spsolve(A, rhs)
np.asarray(x, dtype='<f8').tofile(d + '/x.f64')
`;

function scipySolve(g: QgGeometry, solver: OmegaSolver, rhsGrid: Float64Array): Float64Array {
  const sys = assembleOmegaSystem(solver.operator);
  const dir = fs.mkdtempSync(path.join(os.tmpdir(), 'liftwise-'));
  try {
    const rhs = Float64Array.from(sys.gridIndex, (n) => rhsGrid[n]);
    fs.writeFileSync(path.join(dir, 'rows.i32'), Buffer.from(sys.rows.buffer));
    fs.writeFileSync(path.join(dir, 'cols.i32'), Buffer.from(sys.cols.buffer));
    fs.writeFileSync(path.join(dir, 'vals.f64'), Buffer.from(sys.values.buffer));
    fs.writeFileSync(path.join(dir, 'rhs.f64'), Buffer.from(rhs.buffer));
    execFileSync(PYTHON, ['-c', SCRIPT, dir, String(sys.size)], { stdio: 'pipe' });
    const x = new Float64Array(new Uint8Array(fs.readFileSync(path.join(dir, 'x.f64'))).buffer);
    const out = new Float64Array(g.nx * g.ny * g.nz);
    sys.gridIndex.forEach((n, r) => { out[n] = x[r]; });
    return out;
  } finally {
    fs.rmSync(dir, { recursive: true, force: true });
  }
}

describe('omega solver vs reference tool: SciPy spsolve', () => {
  it('solves the same assembled system to 1e-8 relative (real QG forcing, standard uneven levels)', () => {
    const ax = axes(35, 65, -20, 20, 1, STANDARD_LEVELS);
    const { z, t } = balancedFields(ax, {
      latc: 50,
      u: [10, 8, 0],
      components: [{ w: poly(-300, -500), shape: (lon, lat) => Math.cos(6 * lon) * Math.exp(-(((lat - (50 * Math.PI) / 180) / 0.17) ** 2)) }],
    });
    const d = diagnose({ axes: ax, z, t });
    const g = qgGeometry(ax);
    const solver = new OmegaSolver(g);
    solver.setStability(d.sigma);
    const rhs = Float64Array.from(d.forcing.vorticity, (v, n) => v + d.forcing.thickness[n]);
    const ours = solver.solve(rhs).omega;
    const reference = scipySolve(g, solver, rhs);
    let num = 0, den = 0;
    for (let n = 0; n < ours.length; n++) { num += (ours[n] - reference[n]) ** 2; den += reference[n] ** 2; }
    expect(den).toBeGreaterThan(0);
    expect(Math.sqrt(num / den)).toBeLessThan(1e-8);
    // and the diagnosis' own total is the same field
    let diff = 0;
    for (let n = 0; n < ours.length; n++) diff = Math.max(diff, Math.abs(d.omega[n] - reference[n]));
    expect(diff).toBeLessThan(1e-8 * Math.max(...reference.map(Math.abs)));
  });
});
