/**
 * The Scenarios summary (server/services/scenarios.ts summariseScenarios) with equal weights
 * against numpy.percentile on the same numbers. Reference tool: NumPy via Debian's /usr/bin/python3
 * (python3-numpy), method 'linear' (source: Hyndman and Fan (1996), sample quantile type 7), the
 * definition server/science/statistics.ts documents for equal weights.
 */
import { spawnSync } from 'node:child_process';
import { describe, expect, it } from 'vitest';
import { SCENARIO_QUANTITIES, type ScenarioQuantity } from '@shared/api/scenarios.ts';
import { summariseScenarios, type WeightedValues } from '../../../server/services/scenarios.ts';

const PYTHON = '/usr/bin/python3';

function numpyPercentiles(samples: number[][]): number[][] {
  const script = [
    'import json, sys, numpy',
    'data = json.load(sys.stdin)',
    'print(json.dumps([numpy.percentile(numpy.array(s, dtype=float), [10, 50, 90]).tolist() for s in data]))',
  ].join('\n');
  const run = spawnSync(PYTHON, ['-c', script], { input: JSON.stringify(samples), encoding: 'utf8' });
  if (run.error || run.status !== 0) throw new Error(`reference tool numpy unavailable (${PYTHON}, apt-get install -y python3-numpy): ${run.error?.message ?? run.stderr}`);
  return JSON.parse(run.stdout) as number[][];
}

/** A seeded generator, so the numbers are the same on every run. */
function lcg(seed: number): () => number {
  let s = seed >>> 0;
  return () => ((s = (Math.imul(s, 1664525) + 1013904223) >>> 0) / 2 ** 32);
}

describe('summariseScenarios with equal weights vs numpy.percentile (reference tool: NumPy, type 7)', () => {
  it('agrees for 50 members x 3 regions x 4 days on every quantity, and P50 change is current minus previous', () => {
    const random = lcg(7);
    const make = (offset: number): WeightedValues[] => {
      const rows: WeightedValues[] = [];
      for (const regionId of ['a', 'b', 'c'])
        for (const day of ['2026-12-02', '2026-12-03', '2026-12-04', '2026-12-05'])
          for (let m = 0; m < 50; m++) {
            const values = Object.fromEntries(SCENARIO_QUANTITIES.map((q) => [q, offset + (random() < 0.1 ? 0 : 20 * random() ** 2)])) as Record<ScenarioQuantity, number>;
            rows.push({ regionId, region: regionId, kind: 'hydro', day, weight: 2, values });
          }
      return rows;
    };
    const current = make(0);
    const previous = make(1);
    const out = summariseScenarios(current, previous);
    expect(out).toHaveLength(12);
    const samples: number[][] = [];
    for (const r of out)
      for (const q of SCENARIO_QUANTITIES) {
        samples.push(current.filter((x) => x.regionId === r.regionId && x.day === r.day).map((x) => x.values[q] as number));
        samples.push(previous.filter((x) => x.regionId === r.regionId && x.day === r.day).map((x) => x.values[q] as number));
      }
    const reference = numpyPercentiles(samples);
    let k = 0;
    for (const r of out)
      for (const q of SCENARIO_QUANTITIES) {
        const [p10, p50, p90] = reference[k++];
        const [, prevP50] = reference[k++];
        expect(r.stats[q].p10).toBeCloseTo(p10, 9);
        expect(r.stats[q].p50).toBeCloseTo(p50, 9);
        expect(r.stats[q].p90).toBeCloseTo(p90, 9);
        expect(r.stats[q].previousP50).toBeCloseTo(prevP50, 9);
        expect(r.stats[q].changeP50).toBeCloseTo(p50 - prevP50, 9);
      }
  });
});
