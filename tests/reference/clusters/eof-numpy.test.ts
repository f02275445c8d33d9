/**
 * EOF analysis and silhouettes of the ensemble clustering against NumPy.
 * Reference tool: numpy.linalg.svd (NumPy through Debian's /usr/bin/python3, python3-numpy)
 * on the same member fields: NumPy forms the anomalies and the sqrt(cos lat) weights itself
 * and takes the full SVD of the members x gridpoints matrix, independently of our
 * Gram-matrix + Jacobi route. Source of the silhouette definition: Rousseeuw (1987),
 * implemented directly in NumPy below (scikit-learn is not installed).
 */
import { spawnSync } from 'node:child_process';
import fs from 'node:fs';
import os from 'node:os';
import path from 'node:path';
import { afterAll, describe, expect, it } from 'vitest';
import { clusterEnsemble, eofAnalysis, silhouetteSamples } from '../../../server/science/clusters.ts';
import { mulberry32 } from '../../../server/science/random.ts';
import { LAT, plantedEnsemble, spreadEnsemble } from '../../unit/science/clusters/synthetic-ensemble.ts';

const PYTHON = '/usr/bin/python3';
const dir = fs.mkdtempSync(path.join(os.tmpdir(), 'liftwise-'));
afterAll(() => fs.rmSync(dir, { recursive: true, force: true }));

const EOF_SCRIPT = `
import sys, numpy as np
d, n, nlat, k = sys.argv[1], int(sys.argv[2]), int(sys.argv[3]), int(sys.argv[4])
fields = np.fromfile(d + '/fields.f32', dtype='<f4').astype(np.float64).reshape(n, -1)
lat = np.fromfile(d + '/lat.f64', dtype='<f8')
w = np.repeat(np.sqrt(np.maximum(0.0, np.cos(np.deg2rad(lat)))), fields.shape[1] // nlat)
x = (fields - fields.mean(axis=0)) * w
u, s, vt = np.linalg.svd(x, full_matrices=False)
# numpy's singular-vector signs are arbitrary: apply Liftwise's documented convention
# (largest-magnitude element of each EOF positive) so the two can be compared element by element
for i in range(k):
    if vt[i, np.argmax(np.abs(vt[i]))] < 0:
        vt[i] *= -1; u[:, i] *= -1
(s**2 / np.sum(s**2)).astype('<f8').tofile(d + '/fractions.f64')
vt[:k].astype('<f8').tofile(d + '/patterns.f64')
(u[:, :k] * s[:k]).astype('<f8').tofile(d + '/pcs.f64')
`;

const SILHOUETTE_SCRIPT = `
import sys, numpy as np
d, n = sys.argv[1], int(sys.argv[2])
x = np.fromfile(d + '/points.f64', dtype='<f8').reshape(n, -1)
labels = np.fromfile(d + '/labels.i32', dtype='<i4')
dist = np.sqrt(((x[:, None, :] - x[None, :, :]) ** 2).sum(axis=2))
s = np.zeros(n)
for i in range(n):
    own = labels == labels[i]
    if own.sum() == 1:
        continue  # Rousseeuw (1987): s(i) = 0 for a singleton cluster
    a = dist[i, own].sum() / (own.sum() - 1)
    b = min(dist[i, labels == c].mean() for c in np.unique(labels) if c != labels[i])
    s[i] = (b - a) / max(a, b)
s.astype('<f8').tofile(d + '/silhouettes.f64')
`;

function runPython(script: string, args: (string | number)[]): void {
  const run = spawnSync(PYTHON, ['-c', script, dir, ...args.map(String)], { encoding: 'utf8' });
  if (run.error || run.status !== 0) {
    throw new Error(`reference tool numpy unavailable or failed (${PYTHON} with python3-numpy): ${run.error?.message ?? run.stderr}`);
  }
}

function readF64(name: string): Float64Array {
  const bytes = fs.readFileSync(path.join(dir, name));
  return new Float64Array(bytes.buffer.slice(bytes.byteOffset, bytes.byteOffset + bytes.byteLength));
}

function numpyEof(fields: Float32Array[], k: number) {
  const all = new Float32Array(fields.length * fields[0].length);
  fields.forEach((f, m) => all.set(f, m * f.length));
  fs.writeFileSync(path.join(dir, 'fields.f32'), Buffer.from(all.buffer));
  fs.writeFileSync(path.join(dir, 'lat.f64'), Buffer.from(Float64Array.from(LAT).buffer));
  runPython(EOF_SCRIPT, [fields.length, LAT.length, k]);
  const patterns = readF64('patterns.f64'), pcs = readF64('pcs.f64');
  const p = fields[0].length;
  return {
    fractions: readF64('fractions.f64'),
    patterns: Array.from({ length: k }, (_, i) => patterns.subarray(i * p, (i + 1) * p)),
    pcs: Array.from({ length: fields.length }, (_, m) => pcs.subarray(m * k, (m + 1) * k)),
  };
}

function maxAbsDifference(a: ArrayLike<number>, b: ArrayLike<number>): number {
  expect(a.length).toBe(b.length);
  let worst = 0;
  for (let i = 0; i < a.length; i++) worst = Math.max(worst, Math.abs(a[i] - b[i]));
  return worst;
}

function compareWithNumpy(fields: Float32Array[], options: { varianceFraction: number; maxModes?: number }) {
  const ours = eofAnalysis(fields, LAT, options);
  const reference = numpyEof(fields, ours.modes);
  // every resolved mode's explained-variance fraction (numpy's extra trailing value is ~0)
  expect(maxAbsDifference(ours.explainedVarianceAll, reference.fractions.subarray(0, ours.explainedVarianceAll.length))).toBeLessThan(1e-8);
  for (let i = ours.explainedVarianceAll.length; i < reference.fractions.length; i++) expect(reference.fractions[i]).toBeLessThan(1e-8);
  for (let i = 0; i < ours.modes; i++) expect(maxAbsDifference(ours.patterns[i], reference.patterns[i])).toBeLessThan(1e-8);
  const pcScale = Math.max(...reference.pcs.flatMap((pc) => Array.from(pc, Math.abs)));
  ours.pcs.forEach((pc, m) => expect(maxAbsDifference(pc, reference.pcs[m])).toBeLessThan(1e-10 * pcScale));
  return ours;
}

describe('eofAnalysis vs numpy.linalg.svd (reference tool: numpy.linalg.svd), 51 members on 121 x 81', () => {
  it('matches EOFs, PCs and explained variances for members with six patterns of decreasing spread', () => {
    const ours = compareWithNumpy(spreadEnsemble(51, [90, 60, 40, 25, 15, 10], 8), { varianceFraction: 0.999, maxModes: 6 });
    expect(ours.modes).toBe(6);
  });

  it('matches on the planted three-regime ensemble at the default 90 % truncation', () => {
    const ours = compareWithNumpy(plantedEnsemble([20, 17, 14], 2026).fields, { varianceFraction: 0.9 });
    expect(ours.modes).toBeGreaterThanOrEqual(2);
  });
});

describe('silhouettes vs a direct NumPy implementation of Rousseeuw (1987) (source: Rousseeuw 1987)', () => {
  function numpySilhouettes(points: Float64Array[], labels: ArrayLike<number>): Float64Array {
    const flat = new Float64Array(points.length * points[0].length);
    points.forEach((pt, m) => flat.set(pt, m * pt.length));
    fs.writeFileSync(path.join(dir, 'points.f64'), Buffer.from(flat.buffer));
    fs.writeFileSync(path.join(dir, 'labels.i32'), Buffer.from(Int32Array.from(labels).buffer));
    runPython(SILHOUETTE_SCRIPT, [points.length]);
    return readF64('silhouettes.f64');
  }

  it('agrees on the clustering of a 51-member ensemble in PC space (k = 4)', () => {
    const result = clusterEnsemble(spreadEnsemble(51, [90, 60, 40, 25, 15, 10], 21), LAT, { k: 4, seed: 3 });
    const reference = numpySilhouettes(result.pcs, result.assignments);
    expect(maxAbsDifference(result.memberSilhouettes, reference)).toBeLessThan(1e-12);
    const mean = reference.reduce((s, v) => s + v, 0) / reference.length;
    expect(Math.abs(result.silhouette - mean)).toBeLessThan(1e-12);
  });

  it('agrees on random 3-D points with arbitrary labels, including a singleton cluster', () => {
    const random = mulberry32(404);
    const points = Array.from({ length: 40 }, () => Float64Array.from({ length: 3 }, () => 10 * random()));
    const labels = Array.from({ length: 40 }, (_, m) => (m === 17 ? 4 : Math.floor(random() * 4)));
    const ours = silhouetteSamples(points, labels);
    expect(ours[17]).toBe(0);
    expect(ours.some((s) => s < 0)).toBe(true); // arbitrary labels: some members sit in the wrong cluster
    expect(maxAbsDifference(ours, numpySilhouettes(points, labels))).toBeLessThan(1e-12);
  });
});
