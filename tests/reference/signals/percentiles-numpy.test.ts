/**
 * Weighted percentiles with equal weights against numpy.percentile's default method ('linear',
 * Hyndman and Fan 1996 type 7). Reference tool: NumPy through Debian's /usr/bin/python3
 * (python3-numpy); source of the definition: Hyndman and Fan (1996).
 */
import { spawnSync } from 'node:child_process';
import { describe, expect, it } from 'vitest';
import { weightedPercentiles } from '../../../server/science/statistics.ts';
import { mulberry32 } from '../../../server/science/random.ts';

const PYTHON = '/usr/bin/python3';

function numpyPercentiles(samples: number[][], ps: number[]): number[][] {
  const script = [
    'import json, sys, numpy',
    'data = json.load(sys.stdin)',
    'print(json.dumps([numpy.percentile(numpy.array(s, dtype=float), data["ps"]).tolist() for s in data["samples"]]))',
  ].join('\n');
  const run = spawnSync(PYTHON, ['-c', script], { input: JSON.stringify({ samples, ps }), encoding: 'utf8' });
  if (run.error || run.status !== 0) {
    throw new Error(`reference tool numpy unavailable (${PYTHON} with python3-numpy, apt-get install -y python3-numpy): ${run.error?.message ?? run.stderr}`);
  }
  return JSON.parse(run.stdout) as number[][];
}

describe('weightedPercentiles vs numpy.percentile (reference tool: NumPy, method linear = Hyndman-Fan type 7)', () => {
  it('agrees on 200 seeded random samples of 1 to 60 scenarios for P10, P50, P90 and other percentiles', () => {
    const random = mulberry32(20261202);
    const samples: number[][] = [];
    for (let s = 0; s < 200; s++) {
      const n = 1 + Math.floor(random() * 60);
      const scale = 10 ** Math.floor(random() * 4 - 1);
      // some samples with ties, as ensemble members often give identical zeros
      samples.push(Array.from({ length: n }, () => (random() < 0.2 ? 0 : (random() - 0.3) * scale)));
    }
    const ps = [0, 5, 10, 25, 50, 75, 90, 95, 100];
    const reference = numpyPercentiles(samples, ps);
    samples.forEach((x, s) => {
      const ours = weightedPercentiles(x, null, ps);
      const equalWeights = weightedPercentiles(x, x.map(() => 0.37), ps);
      ps.forEach((_, k) => {
        const tol = 1e-9 * Math.max(1, Math.abs(reference[s][k]));
        expect(Math.abs(ours[k] - reference[s][k])).toBeLessThanOrEqual(tol);
        expect(Math.abs(equalWeights[k] - reference[s][k])).toBeLessThanOrEqual(tol);
      });
    });
  });
});
