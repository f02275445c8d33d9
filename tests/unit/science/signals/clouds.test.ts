import { describe, expect, it } from 'vitest';
import { cloudCover, criticalRelativeHumidity, maximumRandomOverlap, sundqvistCloudCover } from '../../../../server/science/clouds.ts';

const params = {
  cloudCriticalRhPct: 80,
  cloudRhcAscentDropPct: 10,
  cloudRhcDescentRisePct: 10,
  cloudOmegaScalePaPerS: 0.5,
  cloudLowMidBoundaryHpa: 680,
  cloudMidHighBoundaryHpa: 440,
};

describe('sundqvistCloudCover (source: Sundqvist et al. 1989, C = 1 - sqrt((1 - RH) / (1 - RH_c)))', () => {
  it('is 0 at and below RH_c and 1 at saturation', () => {
    expect(sundqvistCloudCover(0.5, 0.8)).toBe(0);
    expect(sundqvistCloudCover(0.8, 0.8)).toBe(0);
    expect(sundqvistCloudCover(1, 0.8)).toBe(1);
    expect(sundqvistCloudCover(1.03, 0.8)).toBe(1);
  });
  it('follows the formula between (hand-worked: RH 0.9, RH_c 0.8 -> 1 - sqrt(0.5) = 0.2929)', () => {
    expect(sundqvistCloudCover(0.9, 0.8)).toBeCloseTo(0.29289, 5);
    expect(sundqvistCloudCover(0.95, 0.8)).toBeCloseTo(0.5, 12);
    expect(sundqvistCloudCover(0.98, 0.6)).toBeCloseTo(1 - Math.sqrt(0.02 / 0.4), 12);
  });
});

describe('criticalRelativeHumidity (omega ramp in the spirit of Slingo 1987)', () => {
  it('keeps RH_c0 without vertical motion or without a diagnosis', () => {
    expect(criticalRelativeHumidity(0, params)).toBeCloseTo(0.8, 12);
    expect(criticalRelativeHumidity(Number.NaN, params)).toBeCloseTo(0.8, 12);
  });
  it('lowers RH_c in ascent and raises it in descent, linearly up to the omega scale', () => {
    expect(criticalRelativeHumidity(-0.25, params)).toBeCloseTo(0.75, 12);
    expect(criticalRelativeHumidity(-0.5, params)).toBeCloseTo(0.7, 12);
    expect(criticalRelativeHumidity(-3, params)).toBeCloseTo(0.7, 12);
    expect(criticalRelativeHumidity(0.25, params)).toBeCloseTo(0.85, 12);
    expect(criticalRelativeHumidity(2, params)).toBeCloseTo(0.9, 12);
  });
  it('stays inside [0.3, 0.99]', () => {
    expect(criticalRelativeHumidity(5, { ...params, cloudRhcDescentRisePct: 50 })).toBe(0.99);
    expect(criticalRelativeHumidity(-5, { ...params, cloudRhcAscentDropPct: 70 })).toBe(0.3);
  });
});

describe('maximumRandomOverlap (source: Geleyn and Hollingsworth 1979), hand-worked cases', () => {
  it('two adjacent cloudy layers overlap maximally', () => {
    expect(maximumRandomOverlap([0.3, 0.5])).toBeCloseTo(0.5, 12);
    expect(maximumRandomOverlap([0.5, 0.3])).toBeCloseTo(0.5, 12);
  });
  it('layers separated by a clear layer overlap randomly: 1 - (1 - 0.3)(1 - 0.5) = 0.65', () => {
    expect(maximumRandomOverlap([0.3, 0, 0.5])).toBeCloseTo(0.65, 12);
  });
  it('two maximal blocks combine randomly: blocks {0.2, 0.4} and {0.6, 0.1} -> 1 - 0.6 x 0.4 = 0.76', () => {
    expect(maximumRandomOverlap([0.2, 0.4, 0, 0.6, 0.1])).toBeCloseTo(0.76, 12);
  });
  it('gives the same total read top-down or bottom-up, 0 for a clear column and 1 with an overcast layer', () => {
    const c = [0.1, 0.5, 0.2, 0, 0.3, 0.7, 0, 0.05];
    expect(maximumRandomOverlap(c)).toBeCloseTo(maximumRandomOverlap([...c].reverse()), 12);
    expect(maximumRandomOverlap([0, 0, 0])).toBe(0);
    expect(maximumRandomOverlap([0.2, 1, 0.3, 0, 0.4])).toBe(1);
  });
  it('never falls below the largest layer nor exceeds random overlap', () => {
    const c = [0.15, 0.4, 0.25, 0.6, 0.1];
    const random = 1 - c.reduce((s, x) => s * (1 - x), 1);
    expect(maximumRandomOverlap(c)).toBeGreaterThanOrEqual(0.6);
    expect(maximumRandomOverlap(c)).toBeLessThanOrEqual(random);
  });
});

describe('cloudCover over a grid', () => {
  const levels = [1e5, 85000, 70000, 50000, 30000, 20000];
  it('puts layers in low / middle / high by the 680 and 440 hPa boundaries and overlaps them', () => {
    // two columns: [0] cloud only at 850 hPa and 300 hPa, [1] cloud at 500 hPa only
    const plane = 2;
    const rh = new Float32Array(levels.length * plane).fill(50);
    const omega = new Float32Array(levels.length * plane);
    rh[1 * plane + 0] = 95; // 850 hPa: low
    rh[4 * plane + 0] = 95; // 300 hPa: high
    rh[3 * plane + 1] = 95; // 500 hPa: middle
    const out = cloudCover(rh, omega, { nlat: 1, nlon: 2, levelsPa: levels }, params);
    const c = sundqvistCloudCover(0.95, 0.8);
    expect(out.layer[1 * plane + 0]).toBeCloseTo(c, 6);
    expect(out.low[0]).toBeCloseTo(c, 6);
    expect(out.middle[0]).toBe(0);
    expect(out.high[0]).toBeCloseTo(c, 6);
    expect(out.total[0]).toBeCloseTo(1 - (1 - c) * (1 - c), 6);
    expect(out.middle[1]).toBeCloseTo(c, 6);
    expect(out.low[1]).toBe(0);
    expect(out.total[1]).toBeCloseTo(c, 6);
  });
  it('gives more cloud in QG ascent than in descent at the same RH', () => {
    const rh = new Float32Array(levels.length * 2).fill(90); // RH_c: 0.72 in the ascent, 0.88 in the descent
    const omega = new Float32Array(levels.length * 2);
    for (let k = 0; k < levels.length; k++) { omega[k * 2] = -0.4; omega[k * 2 + 1] = 0.4; }
    const out = cloudCover(rh, omega, { nlat: 1, nlon: 2, levelsPa: levels }, params);
    expect(out.total[0]).toBeGreaterThan(out.total[1]);
    expect(out.total[1]).toBeGreaterThan(0);
  });
});
