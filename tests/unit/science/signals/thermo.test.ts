import { describe, expect, it } from 'vitest';
import {
  approximateMoistAdiabaticLapseRate, moistAdiabaticLapseRate, moistAdiabaticSaturationHumidityGradient,
  moistAdiabaticTemperatureSlope, potentialTemperature, relativeHumidity, relativeHumidityField,
  saturationMixingRatio, saturationSpecificHumidity, saturationVaporPressure,
} from '../../../../server/science/thermo.ts';

/** Bolton (1980) eq. 43: pseudo-equivalent potential temperature of saturated air (T_L = T). */
function boltonThetaE(tempK: number, pressurePa: number): number {
  const r = saturationMixingRatio(tempK, pressurePa) * 1000; // g/kg
  return tempK * Math.pow(1e5 / pressurePa, 0.2854 * (1 - 0.28e-3 * r))
    * Math.exp((3.376 / tempK - 0.00254) * r * (1 + 0.81e-3 * r));
}

/** Integrates the pseudo-adiabat with our slope (midpoint rule, 1 hPa steps). */
function liftAlongPseudoAdiabat(tempK: number, fromPa: number, toPa: number): number {
  const dp = -100;
  let t = tempK;
  for (let p = fromPa; p > toPa + 1; p += dp) {
    const k1 = moistAdiabaticTemperatureSlope(t, p);
    t += dp * moistAdiabaticTemperatureSlope(t + 0.5 * dp * k1, p + 0.5 * dp);
  }
  return t;
}

describe('saturationVaporPressure (source: Bolton 1980 eq. 10)', () => {
  it('gives 6.112 hPa at 0 degC (the formula constant)', () => {
    expect(saturationVaporPressure(0)).toBeCloseTo(6.112, 6);
  });
  it('gives ~23.37 hPa at 20 degC and ~42.46 hPa at 30 degC (from memory)', () => {
    expect(saturationVaporPressure(20)).toBeCloseTo(23.37, 2);
    expect(saturationVaporPressure(30)).toBeCloseTo(42.46, 2);
  });
  it('rises monotonically with temperature', () => {
    let previous = 0;
    for (let t = -40; t <= 40; t += 1) {
      const es = saturationVaporPressure(t);
      expect(es).toBeGreaterThan(previous);
      previous = es;
    }
  });
});

describe('saturation humidity (q_s = eps e_s / (p - (1 - eps) e_s), SCIENCE.md section 3)', () => {
  it('matches the definition at 1000 hPa and 20 degC', () => {
    const es = 100 * saturationVaporPressure(20);
    expect(saturationSpecificHumidity(293.15, 1e5)).toBeCloseTo((0.622 * es) / (1e5 - 0.378 * es), 12);
    expect(saturationMixingRatio(293.15, 1e5)).toBeCloseTo((0.622 * es) / (1e5 - es), 12);
  });
  it('has q_s = r_s / (1 + r_s) (definition of specific humidity)', () => {
    const r = saturationMixingRatio(280, 7e4);
    expect(saturationSpecificHumidity(280, 7e4)).toBeCloseTo(r / (1 + r), 12);
  });
});

describe('moistAdiabaticLapseRate (source: AMS Glossary, pseudoadiabatic lapse rate)', () => {
  it('is about 4.3 K/km at 1000 hPa and 20 degC (from memory)', () => {
    expect(moistAdiabaticLapseRate(293.15, 1e5) * 1000).toBeGreaterThan(4.2);
    expect(moistAdiabaticLapseRate(293.15, 1e5) * 1000).toBeLessThan(4.4);
  });
  it('is about 6.4 K/km at 1000 hPa and 0 degC (from memory)', () => {
    expect(moistAdiabaticLapseRate(273.15, 1e5) * 1000).toBeGreaterThan(6.3);
    expect(moistAdiabaticLapseRate(273.15, 1e5) * 1000).toBeLessThan(6.6);
  });
  it('stays within 1 % of the Glossary\'s simpler moist-adiabatic form at and below 20 degC (AMS Glossary: "usually within 1 percent")', () => {
    for (const [t, p] of [[293.15, 1e5], [283.15, 1e5], [273.15, 8e4], [253.15, 5e4]]) {
      const ratio = moistAdiabaticLapseRate(t, p) / approximateMoistAdiabaticLapseRate(t, p);
      expect(Math.abs(ratio - 1)).toBeLessThan(0.0101);
    }
    // warm, moist air: the (1 + r) and (eps + r) terms of the pseudo-adiabatic form matter more
    const warm = moistAdiabaticLapseRate(303.15, 1e5) / approximateMoistAdiabaticLapseRate(303.15, 1e5);
    expect(Math.abs(warm - 1)).toBeLessThan(0.02);
  });
  it('tends to the dry adiabatic g/c_p in very cold air (AMS Glossary, dry-adiabatic lapse rate)', () => {
    expect(moistAdiabaticLapseRate(200, 2e4) * 1000).toBeCloseTo((9.80665 / 1004.6) * 1000, 1);
  });
  it('conserves Bolton (1980) eq. 43 equivalent potential temperature when integrated from 1000 to 300 hPa', () => {
    for (const t0 of [303.15, 293.15, 283.15, 273.15]) {
      const top = liftAlongPseudoAdiabat(t0, 1e5, 3e4);
      expect(Math.abs(boltonThetaE(top, 3e4) - boltonThetaE(t0, 1e5))).toBeLessThan(0.5);
    }
  });
});

describe('moistAdiabaticSaturationHumidityGradient', () => {
  it('equals the finite difference of q_s along the integrated pseudo-adiabat (chain rule check)', () => {
    const p = 8e4, h = 500, t = 280;
    const tUp = liftAlongPseudoAdiabat(t, p, p - h);
    // the same adiabat below: integrate downward with the slope
    let tDown = t;
    for (let q = p; q < p + h - 1; q += 100) {
      const k1 = moistAdiabaticTemperatureSlope(tDown, q);
      tDown += 100 * moistAdiabaticTemperatureSlope(tDown + 50 * k1, q + 50);
    }
    const fd = (saturationSpecificHumidity(tDown, p + h) - saturationSpecificHumidity(tUp, p - h)) / (2 * h);
    expect(moistAdiabaticSaturationHumidityGradient(t, p)).toBeCloseTo(fd, 10);
    expect(Math.abs(moistAdiabaticSaturationHumidityGradient(t, p) / fd - 1)).toBeLessThan(1e-3);
  });
  it('is positive (q_s falls as a saturated parcel rises)', () => {
    for (const [t, p] of [[300, 1e5], [270, 7e4], [230, 3e4]]) expect(moistAdiabaticSaturationHumidityGradient(t, p)).toBeGreaterThan(0);
  });
});

describe('relativeHumidity from q', () => {
  it('is 100 % at saturation and 50 % at half the saturation vapour pressure', () => {
    const t = 285, p = 9e4;
    expect(relativeHumidity(saturationSpecificHumidity(t, p), t, p)).toBeCloseTo(100, 8);
    const es = 100 * saturationVaporPressure(t - 273.15);
    const e = es / 2;
    const q = (0.622 * e) / (p - 0.378 * e);
    expect(relativeHumidity(q, t, p)).toBeCloseTo(50, 8);
  });
  it('works over a [level][lat][lon] grid and refuses a size mismatch', () => {
    const levels = [1e5, 5e4];
    const t = new Float32Array([290, 290, 250, 250]);
    const q = new Float32Array([0.005, Number.NaN, 0.0005, 0.0001]);
    const rh = relativeHumidityField(q, t, levels);
    expect(rh[0]).toBeCloseTo(relativeHumidity(0.005, 290, 1e5), 3);
    expect(Number.isNaN(rh[1])).toBe(true);
    expect(rh[2]).toBeCloseTo(relativeHumidity(0.0005, 250, 5e4), 3);
    expect(() => relativeHumidityField(q, new Float32Array(3), levels)).toThrow(/nlev/);
  });
});

describe('potentialTemperature (Poisson equation, kappa = R_d / c_p)', () => {
  it('equals T at 1000 hPa and is ~ T (2)^0.2857 at 500 hPa', () => {
    expect(potentialTemperature(280, 1e5)).toBe(280);
    expect(potentialTemperature(250, 5e4)).toBeCloseTo(250 * Math.pow(2, 287.04 / 1004.6), 10);
  });
});
