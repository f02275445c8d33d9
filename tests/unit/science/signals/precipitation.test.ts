import { describe, expect, it } from 'vitest';
import {
  accumulatePrecipitation, condensationPrecipitationRate, intervalsFromRunningTotal, rainSnowLevelTemperature,
  diagnosedToModelRatio, saturationWeight, snowShare, snowShareField, splitRainSnow,
} from '../../../../server/science/precipitation.ts';
import { moistAdiabaticTemperatureSlope, saturationSpecificHumidity } from '../../../../server/science/thermo.ts';

const params = { precipCriticalRhPct: 80, precipEfficiency: 1 };
const rainSnow = { rainSnowLevel: '850hPa' as const, snowAllBelowC: -4, rainAllAboveC: 0 };

/** A column on the pseudo-adiabat from (t0, p0) upward, sampled at the given levels. */
function adiabaticProfile(t0: number, levels: number[]): number[] {
  const out = [t0];
  let t = t0;
  for (let k = 1; k < levels.length; k++) {
    const steps = 20;
    const dp = (levels[k] - levels[k - 1]) / steps;
    let p = levels[k - 1];
    for (let s = 0; s < steps; s++) {
      const k1 = moistAdiabaticTemperatureSlope(t, p);
      t += dp * moistAdiabaticTemperatureSlope(t + 0.5 * dp * k1, p + 0.5 * dp);
      p += dp;
    }
    out.push(t);
  }
  return out;
}

/** One-column grid (nlat = nlon = 1) from per-level values. */
function column(values: number[]): Float32Array {
  return Float32Array.from(values);
}

describe('saturationWeight (documented linear ramp)', () => {
  it('is 0 at and below the critical RH, 1 at saturation, linear between', () => {
    expect(saturationWeight(70, 80)).toBe(0);
    expect(saturationWeight(80, 80)).toBe(0);
    expect(saturationWeight(90, 80)).toBeCloseTo(0.5, 12);
    expect(saturationWeight(100, 80)).toBe(1);
    expect(saturationWeight(104, 80)).toBe(1);
    expect(saturationWeight(Number.NaN, 80)).toBe(0);
  });
});

describe('condensationPrecipitationRate (condensation-rate method, SCIENCE.md section 3)', () => {
  const levels = Array.from({ length: 71 }, (_, k) => 1e5 - k * 1000); // 1000..300 hPa every 10 hPa
  const shape = { nlat: 1, nlon: 1, levelsPa: levels };
  const t = column(adiabaticProfile(288.15, levels));
  const saturated = column(levels.map(() => 100));

  it('is zero where there is no ascent (omega >= 0)', () => {
    const descent = column(levels.map(() => 0.5));
    const still = column(levels.map(() => 0));
    expect(condensationPrecipitationRate(t, saturated, descent, shape, params)[0]).toBe(0);
    expect(condensationPrecipitationRate(t, saturated, still, shape, params)[0]).toBe(0);
  });

  it('is zero where the air is dry (RH below the critical RH)', () => {
    const ascent = column(levels.map(() => -1));
    const dry = column(levels.map(() => 60));
    expect(condensationPrecipitationRate(t, dry, ascent, shape, params)[0]).toBe(0);
  });

  it('equals omega (q_s bottom - q_s top) / g for uniform ascent in a saturated moist-adiabatic column', () => {
    // With constant omega the integral of (dq_s/dp)_moist dp along the adiabat is the q_s drop.
    const omega = -0.8;
    const rate = condensationPrecipitationRate(t, saturated, column(levels.map(() => omega)), shape, params)[0];
    const qsDrop = saturationSpecificHumidity(t[0], levels[0]) - saturationSpecificHumidity(t[70], levels[70]);
    const expected = (-omega * qsDrop) / 9.80665;
    expect(Math.abs(rate / expected - 1)).toBeLessThan(0.01);
    // order of magnitude: ~1 Pa/s in warm saturated air gives a few mm per hour (from memory)
    expect(rate * 3600).toBeGreaterThan(1);
    expect(rate * 3600).toBeLessThan(10);
  });

  it('scales linearly with the efficiency E and with the ascent', () => {
    const ascent = column(levels.map(() => -0.5));
    const stronger = column(levels.map(() => -1));
    const base = condensationPrecipitationRate(t, saturated, ascent, shape, params)[0];
    expect(condensationPrecipitationRate(t, saturated, ascent, shape, { ...params, precipEfficiency: 0.4 })[0] / (0.4 * base)).toBeCloseTo(1, 6);
    expect(condensationPrecipitationRate(t, saturated, stronger, shape, params)[0] / (2 * base)).toBeCloseTo(1, 6);
  });

  it('counts only the ascending, moist part of the column and skips NaN levels', () => {
    const half = column(levels.map((p) => (p > 65000 ? -1 : 1)));
    const full = column(levels.map(() => -1));
    const rHalf = condensationPrecipitationRate(t, saturated, half, shape, params)[0];
    const rFull = condensationPrecipitationRate(t, saturated, full, shape, params)[0];
    expect(rHalf).toBeGreaterThan(0);
    expect(rHalf).toBeLessThan(rFull);
    const withGap = Float32Array.from(full);
    withGap[0] = Number.NaN;
    expect(condensationPrecipitationRate(t, saturated, withGap, shape, params)[0]).toBeLessThan(rFull);
  });

  it('works column by column on a [level][lat][lon] grid', () => {
    const nlev = 3, nlat = 2, nlon = 2, plane = 4;
    const lv = [9e4, 7e4, 5e4];
    const tt = new Float32Array(nlev * plane).fill(275);
    const rh = new Float32Array(nlev * plane).fill(100);
    const w = new Float32Array(nlev * plane);
    for (let k = 0; k < nlev; k++) w[k * plane + 3] = -1; // ascent only in cell (1, 1)
    const out = condensationPrecipitationRate(tt, rh, w, { nlat, nlon, levelsPa: lv }, params);
    expect(out.length).toBe(plane);
    expect([out[0], out[1], out[2]]).toEqual([0, 0, 0]);
    expect(out[3]).toBeGreaterThan(0);
  });

  it('refuses fields of the wrong size and levels in the wrong order', () => {
    expect(() => condensationPrecipitationRate(t, saturated, new Float32Array(5), shape, params)).toThrow(/omega has 5 values/);
    expect(() => condensationPrecipitationRate(t, saturated, saturated, { ...shape, levelsPa: [...levels].reverse() }, params)).toThrow(/bottom to top/);
  });
});

describe('accumulatePrecipitation (trapezoid in time)', () => {
  it('gives rate x duration for a constant rate and the mean of the ends for a linear change', () => {
    const a = new Float32Array([1e-3, 0]);
    const b = new Float32Array([1e-3, 2e-3]);
    const [acc] = accumulatePrecipitation([a, b], [0, 6]);
    expect(acc[0]).toBeCloseTo(1e-3 * 6 * 3600, 4); // 21.6 mm
    expect(acc[1]).toBeCloseTo(1e-3 * 6 * 3600, 4);
  });
  it('returns one field per interval and refuses unsorted steps', () => {
    const f = new Float32Array([1e-4]);
    expect(accumulatePrecipitation([f, f, f], [0, 3, 6]).length).toBe(2);
    expect(() => accumulatePrecipitation([f, f], [6, 3])).toThrow(/ascend/);
  });
  it('turns a running total into interval amounts', () => {
    const [d1, d2] = intervalsFromRunningTotal([new Float32Array([0]), new Float32Array([2.5]), new Float32Array([2.4999])]);
    expect(d1[0]).toBeCloseTo(2.5, 6);
    expect(d2[0]).toBe(0);
  });
});

describe('rain/snow split (temperature ramp with parameter thresholds)', () => {
  it('is all snow at or below the snow threshold, all rain at or above the rain threshold, linear between', () => {
    expect(snowShare(-10, rainSnow)).toBe(1);
    expect(snowShare(-4, rainSnow)).toBe(1);
    expect(snowShare(-2, rainSnow)).toBeCloseTo(0.5, 12);
    expect(snowShare(-1, rainSnow)).toBeCloseTo(0.25, 12);
    expect(snowShare(0, rainSnow)).toBe(0);
    expect(snowShare(5, rainSnow)).toBe(0);
  });
  it('interpolates 850 hPa in ln p when it is not a level, or takes the lowest level with data', () => {
    const levels = [1e5, 9e4, 8e4];
    const t = new Float32Array([Number.NaN, 270, 260]);
    const shape = { nlat: 1, nlon: 1, levelsPa: levels };
    const w = Math.log(9e4 / 8.5e4) / Math.log(9e4 / 8e4);
    expect(rainSnowLevelTemperature(t, shape, '850hPa')[0]).toBeCloseTo(270 - 10 * w, 4);
    expect(rainSnowLevelTemperature(t, shape, 'lowest')[0]).toBe(270);
    expect(snowShareField(t, shape, rainSnow)[0]).toBeCloseTo(snowShare(270 - 10 * w - 273.15, rainSnow), 4);
  });
  it('refuses 850 hPa when the levels do not reach it', () => {
    const shape = { nlat: 1, nlon: 1, levelsPa: [7e4, 5e4] };
    expect(() => rainSnowLevelTemperature(new Float32Array([260, 250]), shape, '850hPa')).toThrow(/850 hPa is outside/);
  });
});

describe('splitRainSnow and the diagnosed / model ratio', () => {
  it('splits an accumulation by the snow share, keeping the total', () => {
    const { rainMm, snowMm } = splitRainSnow(new Float32Array([10, 4]), new Float32Array([0.25, 1]));
    expect([rainMm[0], snowMm[0], rainMm[1], snowMm[1]]).toEqual([7.5, 2.5, 0, 4]);
    expect(() => splitRainSnow(new Float32Array(2), new Float32Array(3))).toThrow(/snow shares/);
  });
  it('gives diagnosed / model, and NaN when the model has only a trace', () => {
    expect(diagnosedToModelRatio(6, 4)).toBe(1.5);
    expect(Number.isNaN(diagnosedToModelRatio(1, 0.05))).toBe(true);
  });
});
