/**
 * QG fields and the refusals of the diagnosis.
 */
import { describe, expect, it } from 'vitest';
import type { QgInputError } from '../../../../server/science/qg/index.ts';
import {
  diagnose, EquatorialDomainError, geostrophicWind, MissingValuesError, patternCorrelation, qgGeometry,
  staticStability, TooFewLevelsError,
} from '../../../../server/science/qg/index.ts';
import { DRY_AIR_GAS_CONSTANT as R, EARTH_RADIUS, KAPPA, STANDARD_GRAVITY } from '../../../../server/science/constants.ts';
import { axes, balancedFields, poly, STANDARD_LEVELS, standardTemperature, type WaveSpec } from './analytic.ts';

const rad = Math.PI / 180;
const wave: WaveSpec = {
  latc: 50,
  u: [10, 8, 0],
  components: [{ w: poly(-300, -500), shape: (lon, lat) => Math.cos(6 * lon) * Math.exp(-(((lat - 50 * rad) / (10 * rad)) ** 2)) }],
};

describe('static stability (source: ICAO Doc 7488 standard atmosphere; textbook range from memory)', () => {
  it('sigma at 500 hPa of the ICAO standard atmosphere (288.15 K, 1013.25 hPa, 6.5 K/km) lies in 1e-6..3e-6 m2 Pa-2 s-2', () => {
    const levels = Float64Array.from(STANDARD_LEVELS);
    const { sigma, clamped } = staticStability(levels, Float64Array.from(STANDARD_LEVELS, standardTemperature));
    const s500 = sigma[STANDARD_LEVELS.indexOf(50000)];
    expect(clamped).toEqual([]);
    expect(s500).toBeGreaterThan(1e-6);
    expect(s500).toBeLessThan(3e-6);
    // the same profile differentiated analytically: sigma = (R T / p^2)(kappa - R L / g0)
    const exact = ((R * standardTemperature(50000)) / 50000 ** 2) * (KAPPA - (R * 0.0065) / STANDARD_GRAVITY);
    expect(Math.abs(s500 / exact - 1)).toBeLessThan(0.03); // three-point derivative over 100 hPa spacing
  });

  it('clamps a superadiabatic profile and says at which levels', () => {
    const levels = Float64Array.from([100000, 85000, 70000, 50000]);
    // theta falling with height between 1000 and 850 hPa: T drops faster than the dry adiabat
    const t = Float64Array.from([310, 280, 270, 255]);
    const { sigma, clamped } = staticStability(levels, t);
    expect(clamped).toContain(0);
    expect(Math.min(...sigma)).toBeGreaterThan(0);
  });
});

describe('geostrophic wind (analytic Phi on the sphere; source: Holton and Hakim, geostrophic wind in isobaric coordinates)', () => {
  function maxError(step: number): number {
    const ax = axes(30, 60, -20, 20, step, [100000, 50000, 20000]);
    const g = qgGeometry(ax);
    const C = 2000;
    const phi = new Float64Array(g.nx * g.ny * g.nz);
    const uExact = new Float64Array(phi.length), vExact = new Float64Array(phi.length);
    for (let k = 0; k < g.nz; k++) for (let j = 0; j < g.ny; j++) for (let i = 0; i < g.nx; i++) {
      const lat = ax.lat[j] * rad, lon = ax.lon[i] * rad, n = (k * g.ny + j) * g.nx + i;
      // Phi = C sin(3 lon) cos^2(lat) + C sin(2 lat)
      phi[n] = C * Math.sin(3 * lon) * Math.cos(lat) ** 2 + C * Math.sin(2 * lat);
      const dPhiDlat = -2 * C * Math.sin(3 * lon) * Math.cos(lat) * Math.sin(lat) + 2 * C * Math.cos(2 * lat);
      const dPhiDlon = 3 * C * Math.cos(3 * lon) * Math.cos(lat) ** 2;
      uExact[n] = -dPhiDlat / (g.f0 * EARTH_RADIUS);
      vExact[n] = dPhiDlon / (g.f0 * EARTH_RADIUS * Math.cos(lat));
    }
    const { u, v } = geostrophicWind(phi, g);
    let err = 0;
    for (let n = 0; n < phi.length; n++) err = Math.max(err, Math.abs(u[n] - uExact[n]), Math.abs(v[n] - vExact[n]));
    return err;
  }
  it('matches the analytic wind to second-order discretisation error (edges included)', () => {
    const e1 = maxError(1), e2 = maxError(0.5);
    expect(e1).toBeLessThan(0.05); // m/s, for winds of order 10 m/s
    expect(Math.log2(e1 / e2)).toBeGreaterThan(1.8);
  });
});

describe('diagnose: refusals and warnings', () => {
  it('refuses a domain within 10 degrees of the equator', () => {
    const ax = axes(5, 40, 0, 30, 1, STANDARD_LEVELS);
    const { z, t } = balancedFields(ax, wave);
    expect(() => diagnose({ axes: ax, z, t })).toThrow(EquatorialDomainError);
    try { diagnose({ axes: ax, z, t }); } catch (e) {
      expect((e as QgInputError).code).toBe('NEAR_EQUATOR');
      expect((e as Error).message).toMatch(/equator/);
    }
    expect(() => qgGeometry(axes(-20, 20, 0, 30, 1, STANDARD_LEVELS))).toThrow(EquatorialDomainError);
  });

  it('refuses 2 levels', () => {
    const ax = axes(30, 60, 0, 30, 1, [85000, 50000]);
    const { z, t } = balancedFields(ax, wave);
    expect(() => diagnose({ axes: ax, z, t })).toThrow(TooFewLevelsError);
    expect(() => diagnose({ axes: ax, z, t })).toThrow(/at least 3 pressure levels/);
  });

  it('refuses a NaN flood, naming the field and the count', () => {
    const ax = axes(30, 60, 0, 30, 1, STANDARD_LEVELS);
    const { z, t } = balancedFields(ax, wave);
    for (let n = 0; n < t.length; n += 20) t[n] = NaN;
    const count = Math.ceil(t.length / 20);
    expect(() => diagnose({ axes: ax, z, t })).toThrow(MissingValuesError);
    expect(() => diagnose({ axes: ax, z, t })).toThrow(new RegExp(`t \\(temperature\\): ${count} of ${t.length} values are missing`));
  });

  it('fills a few isolated NaNs by neighbour averaging, says so, and barely changes omega', () => {
    const ax = axes(30, 60, 0, 30, 1, STANDARD_LEVELS);
    const { z, t } = balancedFields(ax, wave);
    const clean = diagnose({ axes: ax, z, t });
    const holed = z.slice();
    for (const n of [3000, 6000, 9000]) holed[n] = NaN;
    const filled = diagnose({ axes: ax, z: holed, t });
    expect(filled.warnings.join(' ')).toMatch(/z \(geopotential\): filled 3 isolated missing value/);
    let diff = 0, big = 0;
    for (let n = 0; n < clean.omega.length; n++) { diff = Math.max(diff, Math.abs(filled.omega[n] - clean.omega[n])); big = Math.max(big, Math.abs(clean.omega[n])); }
    expect(diff / big).toBeLessThan(0.2);
    expect(filled.omega.every(Number.isFinite)).toBe(true);
  });

  it('warns when omega exceeds ~10 Pa/s (bad input, e.g. an absurd wave)', () => {
    const ax = axes(30, 60, 0, 30, 1, STANDARD_LEVELS);
    const loud: WaveSpec = { ...wave, components: [{ ...wave.components[0], w: poly(-3e5, -5e5) }] };
    const { z, t } = balancedFields(ax, loud);
    const d = diagnose({ axes: ax, z, t });
    expect(d.warnings.join(' ')).toMatch(/beyond ~10 Pa\/s/);
    const calm = diagnose({ axes: ax, ...balancedFields(ax, wave) });
    expect(calm.warnings).toEqual([]);
  });
});

describe('pattern correlation with the model omega (area-weighted, interior points)', () => {
  it('is 1 for an affine copy, -1 for the negated field, null on the Dirichlet levels; skips missing model values', () => {
    const ax = axes(30, 60, 0, 30, 1, STANDARD_LEVELS);
    const { z, t } = balancedFields(ax, wave);
    const base = diagnose({ axes: ax, z, t });
    const w = Float64Array.from(base.omega, (v) => 2 * v + 0.3);
    w[(5 * ax.lat.length + 10) * ax.lon.length + 10] = NaN;
    const d = diagnose({ axes: ax, z, t, w });
    const pc = d.patternCorrelation!;
    expect(pc[0]).toBeNull();
    expect(pc[pc.length - 1]).toBeNull();
    for (let k = 1; k < pc.length - 1; k++) expect(pc[k]!).toBeCloseTo(1, 12);
    const g = qgGeometry(ax);
    expect(patternCorrelation(base.omega, Float64Array.from(base.omega, (v) => -v), g, 4)).toBeCloseTo(-1, 12);
    // an unrelated field correlates weakly
    const noise = Float64Array.from(base.omega, (_, n) => Math.sin(1.7 * n * n));
    expect(Math.abs(patternCorrelation(base.omega, noise, g, 4)!)).toBeLessThan(0.2);
  });
});
