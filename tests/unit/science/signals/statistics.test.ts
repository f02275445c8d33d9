import { describe, expect, it } from 'vitest';
import { changeAgainstPreviousRun, scenarioSpread, weightedPercentile, weightedPercentiles } from '../../../../server/science/statistics.ts';

describe('weightedPercentile with equal weights (Hyndman and Fan 1996 type 7)', () => {
  it('interpolates between order statistics at h = (n - 1) p (hand-worked)', () => {
    const x = [4, 1, 3, 2];
    expect(weightedPercentile(x, null, 50)).toBeCloseTo(2.5, 12); // h = 1.5
    expect(weightedPercentile(x, null, 10)).toBeCloseTo(1.3, 12); // h = 0.3
    expect(weightedPercentile(x, null, 90)).toBeCloseTo(3.7, 12); // h = 2.7
    expect(weightedPercentile(x, null, 0)).toBe(1);
    expect(weightedPercentile(x, null, 100)).toBe(4);
  });
  it('gives the same with any equal weights as with none', () => {
    const x = [5.5, -1, 3, 8, 2.25, 7];
    for (const p of [10, 33, 50, 90]) {
      expect(weightedPercentile(x, [2, 2, 2, 2, 2, 2], p)).toBeCloseTo(weightedPercentile(x, null, p), 12);
    }
  });
});

describe('weightedPercentile with unequal weights (documented generalisation)', () => {
  it('pulls the median towards a heavier scenario', () => {
    const x = [10, 20, 30];
    expect(weightedPercentile(x, [1, 1, 1], 50)).toBe(20);
    expect(weightedPercentile(x, [1, 1, 4], 50)).toBeGreaterThan(20);
    expect(weightedPercentile(x, [4, 1, 1], 50)).toBeLessThan(20);
  });
  it('places samples at the rescaled centres of their cumulative-weight shares (hand-worked)', () => {
    // weights 1, 1, 2 of 4: centres 0.125, 0.375, 0.75 -> positions 0, 0.4, 1
    const x = [0, 10, 20];
    const w = [1, 1, 2];
    expect(weightedPercentile(x, w, 40)).toBeCloseTo(10, 12);
    expect(weightedPercentile(x, w, 20)).toBeCloseTo(5, 12);
    expect(weightedPercentile(x, w, 70)).toBeCloseTo(15, 12);
  });
  it('is symmetric: negating the values mirrors the percentiles', () => {
    const x = [3, 9, 1, 7, 4];
    const w = [0.1, 0.3, 0.2, 0.25, 0.15];
    for (const p of [10, 50, 90]) {
      expect(weightedPercentile(x.map((v) => -v), w, 100 - p)).toBeCloseTo(-weightedPercentile(x, w, p), 12);
    }
  });
  it('ignores zero-weight scenarios and refuses bad input', () => {
    expect(weightedPercentile([1, 100, 3], [1, 0, 1], 100)).toBe(3);
    expect(weightedPercentile([42], null, 10)).toBe(42);
    expect(() => weightedPercentile([1, 2], [1, -1], 50)).toThrow(/weights must be finite/);
    expect(() => weightedPercentile([1, Number.NaN], null, 50)).toThrow(/NaN/);
    expect(() => weightedPercentile([1, 2], [0, 0], 50)).toThrow(/no value/);
    expect(() => weightedPercentile([1, 2], null, 101)).toThrow(/outside 0..100/);
  });
  it('computes P10 <= P50 <= P90 and the weighted mean', () => {
    const s = scenarioSpread([5, 1, 9, 3], [1, 2, 1, 4]);
    expect(s.p10).toBeLessThanOrEqual(s.p50);
    expect(s.p50).toBeLessThanOrEqual(s.p90);
    expect(s.mean).toBeCloseTo((5 + 2 + 9 + 12) / 8, 12);
    expect(weightedPercentiles([5, 1, 9, 3], [1, 2, 1, 4], [10, 50, 90])).toEqual([s.p10, s.p50, s.p90]);
  });
});

describe('changeAgainstPreviousRun', () => {
  it('gives the difference and percent change per key, and keeps keys present in one run only', () => {
    const current = new Map([['nv-hydro-skarvdal|2026-12-03|P50', 12], ['nv-solar-solvik|2026-12-03|P50', 0.5]]);
    const previous = new Map([['nv-hydro-skarvdal|2026-12-03|P50', 10], ['nv-hydro-old|2026-12-03|P50', 4]]);
    const rows = changeAgainstPreviousRun(current, previous);
    const byKey = Object.fromEntries(rows.map((r) => [r.key, r]));
    expect(byKey['nv-hydro-skarvdal|2026-12-03|P50']).toMatchObject({ change: 2, changePct: 20 });
    expect(byKey['nv-solar-solvik|2026-12-03|P50']).toMatchObject({ previous: null, change: null });
    expect(byKey['nv-hydro-old|2026-12-03|P50']).toMatchObject({ current: null, previous: 4, change: null });
    expect(changeAgainstPreviousRun(new Map([['a', 1]]), new Map([['a', 0]]))[0]).toMatchObject({ change: 1, changePct: null });
  });
});
