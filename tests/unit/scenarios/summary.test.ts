/**
 * Hand-worked cases of the Scenarios summary (weighted percentiles as server/science/statistics.ts
 * defines them) and of the query contract.
 */
import { describe, expect, it } from 'vitest';
import { filterToQuery, scenarioPageQuerySchema, SCENARIO_QUANTITIES, type ScenarioQuantity } from '@shared/api/scenarios.ts';
import { bandOf, summariseScenarios, type WeightedValues } from '../../../server/services/scenarios.ts';

const row = (day: string, weight: number, precipMm: number | null): WeightedValues => ({
  regionId: 'r',
  region: 'R',
  kind: 'hydro',
  day,
  weight,
  values: { ...(Object.fromEntries(SCENARIO_QUANTITIES.map((q) => [q, null])) as Record<ScenarioQuantity, number | null>), precipMm },
});

describe('weighted P10/P50/P90 of the summary (worked by hand)', () => {
  it('unequal weights: values 1, 4, 7, 10 with weights 1, 1, 3, 1', () => {
    // normalised 1/6, 1/6, 1/2, 1/6; centres S_k - w_k/2 = 1/12, 3/12, 7/12, 11/12; rescaled
    // positions 0, 0.2, 0.6, 1. P10: halfway 1..4 = 2.5; P50: 0.75 of 4..7 = 6.25; P90: 0.75 of 7..10 = 9.25
    const band = bandOf([row('d', 1, 10), row('d', 1, 1), row('d', 3, 7), row('d', 1, 4)], 'precipMm');
    expect(band.p10).toBeCloseTo(2.5, 12);
    expect(band.p50).toBeCloseTo(6.25, 12);
    expect(band.p90).toBeCloseTo(9.25, 12);
  });

  it('zero weights and missing values take no part; nothing left gives nulls', () => {
    expect(bandOf([row('d', 1, 2), row('d', 0, 100), row('d', 1, null), row('d', 1, 4)], 'precipMm').p50).toBeCloseTo(3, 12);
    expect(bandOf([row('d', 1, null)], 'precipMm')).toEqual({ p10: null, p50: null, p90: null });
  });

  it('change of P50 against the previous cycle is per region and valid day; a day missing before has none', () => {
    const current = [row('d1', 1, 1), row('d1', 1, 3), row('d2', 1, 5)];
    const previous = [row('d1', 1, 0), row('d1', 1, 1), row('d0', 1, 9)];
    const out = summariseScenarios(current, previous);
    expect(out.map((r) => r.day)).toEqual(['d1', 'd2']);
    expect(out[0].stats.precipMm).toMatchObject({ p50: 2, previousP50: 0.5, changeP50: 1.5 });
    expect(out[1].stats.precipMm).toMatchObject({ p50: 5, previousP50: null, changeP50: null });
    expect(out[0].scenarios).toBe(2);
  });
});

describe('the query contract', () => {
  it('parses lists, number filters and defaults, and round-trips through filterToQuery', () => {
    const q = scenarioPageQuerySchema.parse({ regions: 'a,b', members: ['1', '2,3'], nf: 'precipMm.gte.5,cloudPct.lt.40', sort: 'solarGwh', dir: 'desc' });
    expect(q.regions).toEqual(['a', 'b']);
    expect(q.members).toEqual([1, 2, 3]);
    expect(q.nf).toEqual([
      { column: 'precipMm', op: 'gte', value: 5 },
      { column: 'cloudPct', op: 'lt', value: 40 },
    ]);
    expect(q).toMatchObject({ offset: 0, limit: 100 });
    const again = scenarioPageQuerySchema.parse(Object.fromEntries(filterToQuery(q)));
    expect(again).toEqual(q);
  });

  it('refuses unknown sort columns, unknown number-filter columns and clusters without their clustering', () => {
    expect(scenarioPageQuerySchema.safeParse({ sort: 'inputChecksum' }).success).toBe(false);
    expect(scenarioPageQuerySchema.safeParse({ nf: 'codeVersion.eq.1' }).success).toBe(false);
    expect(scenarioPageQuerySchema.safeParse({ clusters: '1' }).success).toBe(false);
  });
});
