/**
 * Physics of the QG diagnosis on analytic balanced fields.
 * Sources: Holton and Hakim, An Introduction to Dynamic Meteorology (5th ed.), chapter 6 (the
 * Q-vector form is the traditional form rewritten under QG balance; signs of the forcing by
 * differential vorticity advection and by thickness advection); Hoskins, Draghici and Davies (1978).
 */
import { describe, expect, it } from 'vitest';
import { diagnose } from '../../../../server/science/qg/index.ts';
import { EARTH_RADIUS, DRY_AIR_GAS_CONSTANT as R } from '../../../../server/science/constants.ts';
import { axes, balancedFields, coriolis, correlation, logLevels, poly, relativeL2, STANDARD_LEVELS, type WaveSpec } from './analytic.ts';

const rad = Math.PI / 180;
const gauss = (lat: number, c: number, w: number) => Math.exp(-(((lat - c * rad) / (w * rad)) ** 2));

function valueAt(field: Float64Array, ax: { lat: Float64Array; lon: Float64Array }, k: number, latDeg: number, lonDeg: number): number {
  const j = ax.lat.findIndex((v) => Math.abs(v - latDeg) < 1e-9);
  const i = ax.lon.findIndex((v) => Math.abs(v - lonDeg) < 1e-9);
  return field[(k * ax.lat.length + j) * ax.lon.length + i];
}

describe('traditional and Q-vector forms agree on smooth balanced fields (source: Holton and Hakim, chapter 6)', () => {
  const spec: WaveSpec = {
    latc: 45,
    u: [8, 6, 1],
    components: [
      { w: poly(300, 400, -60), shape: (lon, lat) => Math.cos(5 * lon) * gauss(lat, 45, 8) },
      { w: poly(150, 100), shape: (lon, lat) => Math.sin(3 * lon + 2 * lat) },
    ],
  };
  function compare(step: number, nz: number): { rel: number; corr: number } {
    const ax = axes(30, 60, -30, 30, step, logLevels(nz));
    const { z, t } = balancedFields(ax, spec);
    const d = diagnose({ axes: ax, z, t });
    expect(d.residual.total).toBeLessThan(1e-10);
    expect(d.residual.qVector).toBeLessThan(1e-10);
    return { rel: relativeL2(d.omegaQVector, d.omega), corr: correlation(d.omegaQVector, d.omega) };
  }

  it('pattern correlation > 0.99 and the relative difference shrinks ~4x when every spacing halves', () => {
    const coarse = compare(1, 7), fine = compare(0.5, 13);
    expect(coarse.corr).toBeGreaterThan(0.99);
    expect(fine.corr).toBeGreaterThan(0.999);
    expect(fine.rel).toBeLessThan(coarse.rel / 3);
    expect(fine.rel).toBeLessThan(0.05);
  });
});

describe('signs (source: Holton and Hakim, chapter 6)', () => {
  it('cyclonic vorticity advection increasing with height ahead (east) of a trough gives omega < 0; behind it omega > 0', () => {
    // trough at lon 0 (Phi minimum), zonal wavenumber 8, amplitude and westerlies growing with height
    const spec: WaveSpec = {
      latc: 45,
      u: [10, 8, 0],
      components: [{ w: poly(-300, -500), shape: (lon, lat) => Math.cos(8 * lon) * gauss(lat, 45, 10) }],
    };
    const ax = axes(25, 65, -45, 45, 1, STANDARD_LEVELS);
    const { z, t } = balancedFields(ax, spec);
    const d = diagnose({ axes: ax, z, t });
    const k500 = STANDARD_LEVELS.indexOf(50000);
    const ahead = valueAt(d.omegaVorticity, ax, k500, 45, 11), behind = valueAt(d.omegaVorticity, ax, k500, 45, -11);
    expect(ahead).toBeLessThan(0);
    expect(behind).toBeGreaterThan(0);
    // the vorticity forcing itself is positive ahead of the trough (the operator is negative definite)
    expect(valueAt(d.forcing.vorticity, ax, k500, 45, 11)).toBeGreaterThan(0);
    expect(d.omega.every(Number.isFinite)).toBe(true);
  });

  it('warm advection gives omega < 0 at the level of the warm advection maximum', () => {
    // temperature falling poleward across 45N, strongest near 700 hPa, advected by a southerly wind
    const sm = Math.log(1000 / 700), dT = 6, width = 6, latc = 45;
    const f0 = coriolis(45);
    const spec: WaveSpec = {
      latc,
      u: [0, 0, 0],
      components: [
        // dW/ds = -R dT g(s), g = (s/sm) exp(1 - s/sm) peaking at s = sm: T' = -dT g(s) tanh(.)
        {
          w: (s) => [-R * dT * Math.E * sm * (1 - (1 + s / sm) * Math.exp(-s / sm)), -R * dT * (s / sm) * Math.exp(1 - s / sm)],
          shape: (_lon, lat) => Math.tanh((lat - latc * rad) / (width * rad)),
        },
        // southerly geostrophic wind of about 10 m/s: Phi = f0 a cos(latc) V lon
        { w: poly(f0 * EARTH_RADIUS * Math.cos(latc * rad) * 10), shape: (lon) => lon },
      ],
    };
    const ax = axes(25, 65, -40, 40, 1, STANDARD_LEVELS);
    const { z, t } = balancedFields(ax, spec);
    const d = diagnose({ axes: ax, z, t });
    const k700 = STANDARD_LEVELS.indexOf(70000);
    expect(valueAt(d.omegaThickness, ax, k700, 45, 0)).toBeLessThan(0);
    expect(valueAt(d.forcing.thickness, ax, k700, 45, 0)).toBeGreaterThan(0);
    // the Q-vector form carries both parts; it must match the traditional total there
    expect(Math.sign(valueAt(d.omegaQVector, ax, k700, 45, 0))).toBe(Math.sign(valueAt(d.omega, ax, k700, 45, 0)));
  });
});
