import { describe, expect, it } from 'vitest';
import { scenarioWeightsFromCall, summariseScenarios } from '../../../server/services/snapshot-content.ts';

const A = '11111111-1111-4111-8111-111111111111';
const B = '22222222-2222-4222-8222-222222222222';
const scenarios = [0, 1, 2, 3].map((member) => ({ runId: A, member })).concat([0, 1].map((member) => ({ runId: B, member })));

describe('scenario weights from the published regime call', () => {
  it('without a call every run weights its members equally', () => {
    const w = scenarioWeightsFromCall(scenarios, null);
    expect(w.get(`${A}:0`)).toBe(0.25);
    expect(w.get(`${A}:3`)).toBe(0.25);
    expect(w.get(`${B}:1`)).toBe(0.5);
  });

  it('a member basis weights the run it names (unnamed members 0) and leaves other runs equal', () => {
    const call = { weights: { basis: 'member' as const, weights: [{ key: `${A}:0`, pct: 60 }, { key: `${A}:2`, pct: 40 }] }, clustering: null };
    const w = scenarioWeightsFromCall(scenarios, call);
    expect(w.get(`${A}:0`)).toBeCloseTo(0.6, 12);
    expect(w.get(`${A}:1`)).toBe(0);
    expect(w.get(`${A}:2`)).toBeCloseTo(0.4, 12);
    expect(w.get(`${A}:3`)).toBe(0);
    expect(w.get(`${B}:0`)).toBe(0.5);
  });

  it('a cluster basis shares each cluster weight equally among its members', () => {
    const call = {
      weights: { basis: 'cluster' as const, clusteringId: '33333333-3333-4333-8333-333333333333', weights: [{ key: '0', pct: 80 }, { key: '1', pct: 20 }] },
      clustering: { runId: A, clusters: [{ id: '0', members: [0, 1] }, { id: '1', members: [2, 3] }] },
    };
    const w = scenarioWeightsFromCall(scenarios, call);
    expect(w.get(`${A}:0`)).toBeCloseTo(0.4, 12);
    expect(w.get(`${A}:1`)).toBeCloseTo(0.4, 12);
    expect(w.get(`${A}:2`)).toBeCloseTo(0.1, 12);
    expect(w.get(`${A}:3`)).toBeCloseTo(0.1, 12);
    expect(w.get(`${B}:1`)).toBe(0.5);
  });

  it('weights of the members present are renormalised when a filter leaves some out', () => {
    const call = { weights: { basis: 'member' as const, weights: [{ key: `${A}:0`, pct: 50 }, { key: `${A}:1`, pct: 25 }, { key: `${A}:2`, pct: 25 }] }, clustering: null };
    const w = scenarioWeightsFromCall([{ runId: A, member: 1 }, { runId: A, member: 2 }], call);
    expect(w.get(`${A}:1`)).toBeCloseTo(0.5, 12);
    expect(w.get(`${A}:2`)).toBeCloseTo(0.5, 12);
  });
});

describe('scenario summary per run, region, day and quantity', () => {
  const row = (runId: string, member: number, precipMm: number | null, weight: number) => ({
    runId, model: 'M', cycle: '2026-12-01T00:00:00.000Z', member, regionId: 'r', day: '2026-12-01', weight,
    precipMm, snowShare: null, cloudPct: null, ghiKwhM2: null, solarGwh: null, inflowGwh: null,
  });

  it('equal weights give the sample median as P50 (common practice: Hyndman-Fan type 7); runs are kept apart', () => {
    const out = summariseScenarios([row(A, 0, 1, 1 / 3), row(A, 1, 3, 1 / 3), row(A, 2, 2, 1 / 3), row(B, 0, 10, 1)]);
    const a = out.find((s) => s.runId === A && s.quantity === 'precipMm')!;
    expect(a.p50).toBeCloseTo(2, 12);
    // type 7 between sorted 1, 2, 3: P10 at position 0.2 -> 1.2, P90 at 1.8 -> 2.8
    expect(a.p10).toBeCloseTo(1.2, 12);
    expect(a.p90).toBeCloseTo(2.8, 12);
    expect(a.scenarios).toBe(3);
    expect(out.find((s) => s.runId === B)!.p50).toBe(10);
    expect(out.some((s) => s.quantity === 'cloudPct')).toBe(false);
  });

  it('members without a value or with weight 0 take no part', () => {
    const out = summariseScenarios([row(A, 0, 5, 0.5), row(A, 1, null, 0.25), row(A, 2, 100, 0)]);
    expect(out).toHaveLength(1);
    expect(out[0]).toMatchObject({ p10: 5, p50: 5, p90: 5, scenarios: 1 });
  });
});
