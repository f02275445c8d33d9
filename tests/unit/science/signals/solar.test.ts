import { describe, expect, it } from 'vitest';
import {
  cellTemperature, clearSkyGhiHaurwitz, cloudAttenuatedGhi, cosAngleOfIncidence, erbsDiffuseFraction,
  extraterrestrialIrradiance, planeOfArrayIrradiance, pvPower, solarPosition, solarZoneEnergy, splitGhi,
} from '../../../../server/science/solar.ts';

describe('clearSkyGhiHaurwitz (source: Haurwitz 1945, 1098 cos z exp(-0.059 / cos z))', () => {
  it('gives 1098 exp(-0.059) = 1035.1 W/m2 at z = 0', () => {
    expect(clearSkyGhiHaurwitz(0)).toBeCloseTo(1098 * Math.exp(-0.059), 9);
    expect(clearSkyGhiHaurwitz(0)).toBeCloseTo(1035.1, 1);
  });
  it('gives 1098 x 0.5 x exp(-0.118) at z = 60 deg and 0 when the sun is down', () => {
    expect(clearSkyGhiHaurwitz(60)).toBeCloseTo(549 * Math.exp(-0.118), 6);
    expect(clearSkyGhiHaurwitz(90)).toBe(0);
    expect(clearSkyGhiHaurwitz(120)).toBe(0);
  });
});

describe('cloudAttenuatedGhi (source: Kasten and Czeplak 1980, 1 - 0.75 N^3.4)', () => {
  it('keeps 25 % at N = 1, ~92.9 % at N = 0.5 and 100 % at N = 0', () => {
    expect(cloudAttenuatedGhi(1000, 1)).toBeCloseTo(250, 9);
    expect(cloudAttenuatedGhi(1000, 0.5) / 1000).toBeCloseTo(0.929, 3);
    expect(cloudAttenuatedGhi(1000, 0)).toBe(1000);
  });
});

describe('erbsDiffuseFraction (source: Erbs, Klein and Duffie 1982)', () => {
  it('uses 1 - 0.09 kt up to 0.22 and 0.165 above 0.80', () => {
    expect(erbsDiffuseFraction(0.1)).toBeCloseTo(0.991, 12);
    expect(erbsDiffuseFraction(0.9)).toBe(0.165);
  });
  it('uses the quartic between (kt = 0.5: 0.9511 - 0.0802 + 1.097 - 2.07975 + 0.771 = 0.65915)', () => {
    expect(erbsDiffuseFraction(0.5)).toBeCloseTo(0.65915, 5);
  });
  it('is continuous at the breakpoints to within 0.001 (the published fit)', () => {
    expect(Math.abs(erbsDiffuseFraction(0.2200001) - erbsDiffuseFraction(0.22))).toBeLessThan(1e-3);
    expect(Math.abs(erbsDiffuseFraction(0.8000001) - erbsDiffuseFraction(0.8))).toBeLessThan(1e-3);
  });
});

describe('splitGhi and extraterrestrial irradiance', () => {
  it('uses 1361 / R^2 (Kopp and Lean 2011 solar constant, inverse-square distance)', () => {
    expect(extraterrestrialIrradiance(1)).toBe(1361);
    expect(extraterrestrialIrradiance(0.9833)).toBeCloseTo(1361 / 0.9833 ** 2, 9);
  });
  it('closes GHI = DHI + DNI cos z', () => {
    const z = 40;
    const parts = splitGhi(700, z, 1361);
    expect(parts.dhi + parts.dni * Math.cos((z * Math.PI) / 180)).toBeCloseTo(700, 9);
    expect(parts.dhi / 700).toBeCloseTo(erbsDiffuseFraction(700 / (1361 * Math.cos((z * Math.PI) / 180))), 12);
  });
  it('treats everything as diffuse at the horizon and nothing at night', () => {
    expect(splitGhi(5, 89.5, 1361)).toEqual({ ghi: 5, dhi: 5, dni: 0 });
    expect(splitGhi(0, 100, 1361)).toEqual({ ghi: 0, dhi: 0, dni: 0 });
  });
});

describe('planeOfArrayIrradiance (isotropic sky, Liu and Jordan 1963)', () => {
  const parts = { ghi: 600, dhi: 200, dni: 600 };
  it('equals GHI on a horizontal plane', () => {
    const z = Math.acos(400 / 600) * (180 / Math.PI); // DNI cos z + DHI = GHI
    expect(planeOfArrayIrradiance(parts, z, 180, { tiltDeg: 0, azimuthDeg: 180 }, 0.2)).toBeCloseTo(600, 9);
  });
  it('takes the full beam on a plane facing the sun, half the sky and half the ground on a vertical one', () => {
    const z = 50, az = 200;
    const facing = planeOfArrayIrradiance(parts, z, az, { tiltDeg: z, azimuthDeg: az }, 0.2);
    const cb = Math.cos((z * Math.PI) / 180);
    expect(cosAngleOfIncidence(z, az, { tiltDeg: z, azimuthDeg: az })).toBeCloseTo(1, 12);
    expect(facing).toBeCloseTo(600 + (200 * (1 + cb)) / 2 + (600 * 0.2 * (1 - cb)) / 2, 9);
    const backside = planeOfArrayIrradiance(parts, 30, 180, { tiltDeg: 90, azimuthDeg: 0 }, 0.2);
    expect(backside).toBeCloseTo(100 + 60, 9); // no beam: sky 200/2, ground 600 x 0.2 / 2
  });
});

describe('pvPower with the NOCT cell temperature (Ross 1976 NOCT model)', () => {
  const pv = { capacityMw: 100, gammaPerK: -0.004, lossesPct: 14, noctC: 45 };
  it('gives P_inst (1 - losses) at 1000 W/m2 with the cell at 25 degC', () => {
    const air = 25 - (25 / 800) * 1000; // NOCT model: T_cell = T_air + (45 - 20) / 800 x POA
    expect(cellTemperature(air, 1000, 45)).toBeCloseTo(25, 12);
    expect(pvPower(1000, air, pv)).toBeCloseTo(86, 9);
  });
  it('loses 4 % for a cell 10 K warmer with gamma = -0.004/K (common practice coefficient)', () => {
    const air = 35 - (25 / 800) * 1000;
    expect(pvPower(1000, air, pv)).toBeCloseTo(86 * 0.96, 9);
    expect(pvPower(1000, air - 20, pv)).toBeCloseTo(86 * 1.04, 9);
  });
  it('is zero without irradiance', () => {
    expect(pvPower(0, 10, pv)).toBe(0);
  });
});

describe('solarPosition (NOAA / Meeus)', () => {
  it('puts the sun due south at solar noon and its noon elevation at 90 - lat + declination', () => {
    // find local noon on 2026-06-21 at 60 N, 10 E by scanning the azimuth
    const lat = 60, lon = 10;
    let best = { t: 0, dz: 999 };
    for (let m = 9 * 60; m < 13 * 60; m++) {
      const t = Date.UTC(2026, 5, 21, 0, m);
      const s = solarPosition(t, lat, lon);
      if (s.geometricZenithDeg < best.dz) best = { t, dz: s.geometricZenithDeg };
    }
    const s = solarPosition(best.t, lat, lon);
    expect(Math.abs(s.azimuthDeg - 180)).toBeLessThan(0.5);
    expect(s.geometricZenithDeg).toBeCloseTo(lat - s.declinationDeg, 2);
    expect(s.declinationDeg).toBeCloseTo(23.44, 1); // solstice declination (from memory)
  });
  it('gives an equation of time near +16 min in early November and -14 min in mid February (from memory)', () => {
    expect(solarPosition(Date.UTC(2026, 10, 3, 12), 0, 0).equationOfTimeMin).toBeCloseTo(16.4, 0);
    expect(solarPosition(Date.UTC(2026, 1, 11, 12), 0, 0).equationOfTimeMin).toBeCloseTo(-14.2, 0);
  });
});

describe('solarZoneEnergy (hourly steps, daily GWh per UTC day)', () => {
  const zone = {
    capacityMw: 200, tiltDeg: 30, azimuthDeg: 180, lossesPct: 14, gammaPerK: -0.004, noctC: 45,
    albedo: 0.2, solarConstantWm2: 1361, cloudAttenuationA: 0.75, cloudAttenuationB: 3.4,
  };
  const ref = Date.UTC(2026, 5, 1, 0);
  it('covers whole UTC hours between the first and last step and sums them per day', () => {
    const series = { referenceTimeMs: ref, stepsHours: [0, 24, 48], cloudFraction: [0, 0, 0], airTempC: [15, 15, 15], latDeg: 57, lonDeg: 15 };
    const { hours, days } = solarZoneEnergy(series, zone);
    expect(hours.length).toBe(48);
    expect(days.map((d) => d.day)).toEqual(['2026-06-01', '2026-06-02']);
    expect(days[0].hoursCovered).toBe(24);
    const day0 = hours.filter((h) => h.startMs < ref + 86_400_000).reduce((s, h) => s + h.powerMw, 0) / 1000;
    expect(days[0].energyGwh).toBeCloseTo(day0, 12);
    // a clear June day of a 200 MW south-facing zone at 57 N: roughly 1 to 2 GWh, a daily capacity factor of 20-40 % (from memory)
    expect(days[0].energyGwh).toBeGreaterThan(1);
    expect(days[0].energyGwh).toBeLessThan(2);
  });
  it('interpolates cloud cover linearly between steps and loses energy under cloud', () => {
    const clear = { referenceTimeMs: ref, stepsHours: [0, 24], cloudFraction: [0, 0], airTempC: [15, 15], latDeg: 57, lonDeg: 15 };
    const ramp = { ...clear, cloudFraction: [0, 1] };
    const a = solarZoneEnergy(clear, zone).hours;
    const b = solarZoneEnergy(ramp, zone).hours;
    const noon = 11; // 11:00-12:00 UTC, cloud at 11.5 h = 11.5 / 24
    expect(b[noon].ghi / a[noon].ghi).toBeCloseTo(1 - 0.75 * (11.5 / 24) ** 3.4, 9);
    expect(solarZoneEnergy(ramp, zone).days[0].energyGwh).toBeLessThan(solarZoneEnergy(clear, zone).days[0].energyGwh);
  });
  it('gives nothing in the polar night (70 N, 21 December)', () => {
    const night = { referenceTimeMs: Date.UTC(2026, 11, 21), stepsHours: [0, 24], cloudFraction: [0, 0], airTempC: [-10, -10], latDeg: 70, lonDeg: 20 };
    expect(solarZoneEnergy(night, zone).days[0].energyGwh).toBe(0);
  });
  it('refuses series of unequal length', () => {
    expect(() => solarZoneEnergy({ referenceTimeMs: ref, stepsHours: [0, 6], cloudFraction: [0], airTempC: [1, 2], latDeg: 57, lonDeg: 15 }, zone)).toThrow(/at least 2 steps/);
  });
});
