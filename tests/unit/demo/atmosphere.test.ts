/**
 * The synthetic atmosphere must be balanced the way the QG diagnosis assumes
 * (SCIENCE.md section 2): hydrostatic, statically stable, geostrophic, with the model's
 * ascent ahead of the trough. Small grids so the file runs in well under a second.
 */
import { describe, expect, it } from 'vitest';
import {
  BASE_WAVE, EARTH_RADIUS, R_D, SURFACE_PRESSURE, fieldsAt, geopotentialAt, geostrophicWindAt, gridAxes, makeContext,
  temperatureAt, troughLongitude, type Domain,
} from '../../../scripts/demo/atmosphere.ts';

const DEG = Math.PI / 180;
const domain: Domain = { latSouth: 50, latNorth: 72, lonWest: -6, lonEast: 34, resolution: 1 };
const ctx = makeContext(domain, BASE_WAVE);
const axes = gridAxes(domain);
const levelsHpa = [1000, 925, 850, 700, 600, 500, 400, 300, 250, 200, 150, 100];
const levelsPa = levelsHpa.map((p) => p * 100);
const nlat = axes.lat.length;
const nlon = axes.lon.length;
const n2 = nlat * nlon;
const fields = fieldsAt(ctx, axes, levelsPa, 0, 24);

describe('grid', () => {
  it('runs north to south and west to east with the requested spacing', () => {
    expect(axes.lat[0]).toBe(72);
    expect(axes.lat[nlat - 1]).toBe(50);
    expect(axes.lon[0]).toBe(-6);
    expect(axes.lon[nlon - 1]).toBe(34);
    expect(nlat).toBe(23);
    expect(nlon).toBe(41);
  });
  it('refuses a span that is not a multiple of the spacing', () => {
    expect(() => gridAxes({ ...domain, resolution: 0.7 })).toThrow(/multiple/);
  });
});

describe('hydrostatic balance (source: hydrostatic equation T = -(p/R_d) dPhi/dp, textbook)', () => {
  it('grid temperature equals -(p/R_d) dPhi/dp of the geopotential, by finite differences', () => {
    let worst = 0;
    for (const k of [0, 2, 5, 7, 10]) {
      const p = levelsPa[k];
      for (let j = 0; j < nlat; j += 5) {
        for (let i = 0; i < nlon; i += 7) {
          const zeta = Math.log(SURFACE_PRESSURE / p);
          const h = 0.01; // dzeta = -dp/p
          const dPhi = geopotentialAt(ctx, zeta + h, axes.lat[j], axes.lon[i], 24) - geopotentialAt(ctx, zeta - h, axes.lat[j], axes.lon[i], 24);
          const expected = dPhi / (2 * h) / R_D;
          worst = Math.max(worst, Math.abs(fields.t[k * n2 + j * nlon + i] - expected));
        }
      }
    }
    expect(worst).toBeLessThan(0.01);
  });

  it('layer-mean temperature matches the thickness between grid levels (hypsometric equation)', () => {
    for (let k = 0; k + 1 < levelsPa.length; k++) {
      for (let idx = 0; idx < n2; idx += 97) {
        const thickness = fields.z[(k + 1) * n2 + idx] - fields.z[k * n2 + idx];
        const layerT = thickness / (R_D * Math.log(levelsPa[k] / levelsPa[k + 1]));
        const meanT = (fields.t[k * n2 + idx] + fields.t[(k + 1) * n2 + idx]) / 2;
        expect(Math.abs(layerT - meanT)).toBeLessThan(1.5);
      }
    }
  });

  it('the fast grid path agrees with the pointwise definitions', () => {
    for (const [k, j, i] of [[1, 3, 4], [5, 11, 20], [9, 20, 37]]) {
      const zeta = Math.log(SURFACE_PRESSURE / levelsPa[k]);
      const idx = k * n2 + j * nlon + i;
      expect(fields.z[idx]).toBeCloseTo(geopotentialAt(ctx, zeta, axes.lat[j], axes.lon[i], 24), 1);
      expect(fields.t[idx]).toBeCloseTo(temperatureAt(ctx, zeta, axes.lat[j], axes.lon[i], 24), 2);
      const [u, v] = geostrophicWindAt(ctx, zeta, axes.lat[j], axes.lon[i], 24);
      expect(fields.u[idx]).toBeCloseTo(u, 2);
      expect(fields.v[idx]).toBeCloseTo(v, 2);
    }
  });
});

describe('static stability (source: SCIENCE.md section 2; sigma about 2e-6 m2 Pa-2 s-2 mid-troposphere, from memory)', () => {
  const meanT = levelsPa.map((_, k) => {
    let s = 0;
    for (let idx = 0; idx < n2; idx++) s += fields.t[k * n2 + idx];
    return s / n2;
  });
  const kappa = R_D / 1004.6;
  const theta = meanT.map((t, k) => t * (1e5 / levelsPa[k]) ** kappa);

  it('area-mean potential temperature rises at every level going up', () => {
    for (let k = 0; k + 1 < theta.length; k++) expect(theta[k + 1]).toBeGreaterThan(theta[k]);
  });

  it('sigma = -(R T / p) dln(theta)/dp is positive and of textbook size at 500 hPa', () => {
    const k = levelsHpa.indexOf(500);
    const dlnThetaDp = (Math.log(theta[k + 1]) - Math.log(theta[k - 1])) / (levelsPa[k + 1] - levelsPa[k - 1]);
    const sigma = -((R_D * meanT[k]) / levelsPa[k]) * dlnThetaDp;
    expect(sigma).toBeGreaterThan(5e-7);
    expect(sigma).toBeLessThan(1e-5);
  });

  it('temperatures are in a plausible winter range', () => {
    for (const t of fields.t) {
      expect(t).toBeGreaterThan(195);
      expect(t).toBeLessThan(295);
    }
  });
});

describe('geostrophic wind (source: SCIENCE.md section 2, u_g = -(1/f0) dPhi/dy, v_g = (1/f0) dPhi/dx)', () => {
  it('u and v match centred differences of the stored geopotential on a fine grid', () => {
    const fine: Domain = { latSouth: 58, latNorth: 64, lonWest: 0, lonEast: 12, resolution: 0.1 };
    const fa = gridAxes(fine);
    const f = fieldsAt(ctx, fa, [50000, 85000], 0, 30);
    const nx = fa.lon.length;
    const ny = fa.lat.length;
    const m = nx * ny;
    let worst = 0;
    let maxSpeed = 0;
    for (let k = 0; k < 2; k++) {
      for (let j = 1; j < ny - 1; j += 3) {
        for (let i = 1; i < nx - 1; i += 3) {
          const at = (jj: number, ii: number) => f.z[k * m + jj * nx + ii];
          const dLat = 2 * 0.1 * DEG; // row j-1 is north of row j
          const dPhiDy = (at(j - 1, i) - at(j + 1, i)) / (EARTH_RADIUS * dLat);
          const dPhiDx = (at(j, i + 1) - at(j, i - 1)) / (EARTH_RADIUS * Math.cos(fa.lat[j] * DEG) * dLat);
          const u = -dPhiDy / ctx.f0;
          const v = dPhiDx / ctx.f0;
          const idx = k * m + j * nx + i;
          worst = Math.max(worst, Math.abs(u - f.u[idx]), Math.abs(v - f.v[idx]));
          maxSpeed = Math.max(maxSpeed, Math.hypot(f.u[idx], f.v[idx]));
        }
      }
    }
    expect(maxSpeed).toBeGreaterThan(10);
    expect(worst).toBeLessThan(0.02 * maxSpeed);
  });

  it('a westerly jet: mean u positive and strongest near 250 hPa', () => {
    const meanU = levelsPa.map((_, k) => {
      let s = 0;
      for (let idx = 0; idx < n2; idx++) s += fields.u[k * n2 + idx];
      return s / n2;
    });
    expect(Math.min(...meanU)).toBeGreaterThan(0);
    expect(levelsHpa[meanU.indexOf(Math.max(...meanU))]).toBe(250);
  });
});

describe('the wave and the model ascent', () => {
  const k500 = levelsHpa.indexOf(500);
  const jc = axes.lat.indexOf(61);

  it('ascent (omega < 0) lies east of the 500 hPa trough, within half a wavelength', () => {
    let troughI = 0;
    let ascentI = 0;
    for (let i = 0; i < nlon; i++) {
      const idx = k500 * n2 + jc * nlon + i;
      if (fields.z[idx] < fields.z[k500 * n2 + jc * nlon + troughI]) troughI = i;
      if (fields.w[idx] < fields.w[k500 * n2 + jc * nlon + ascentI]) ascentI = i;
    }
    const shift = axes.lon[ascentI] - axes.lon[troughI];
    expect(shift).toBeGreaterThan(2);
    expect(shift).toBeLessThan(25);
  });

  it('the trough tilts westward with height', () => {
    const troughLon = (k: number) => {
      let best = 0;
      for (let i = 0; i < nlon; i++) if (fields.z[k * n2 + jc * nlon + i] - fields.z[k * n2 + jc * nlon + best] < 0) best = i;
      return axes.lon[best];
    };
    expect(troughLon(levelsHpa.indexOf(300))).toBeLessThan(troughLon(levelsHpa.indexOf(850)));
  });

  it('omega is of synoptic size, 0.1 to 1 Pa/s (textbook order of magnitude, from memory)', () => {
    const peak = Math.max(...Array.from(fields.w, Math.abs));
    expect(peak).toBeGreaterThan(0.1);
    expect(peak).toBeLessThan(1.5);
  });

  it('humidity and cloud are high under ascent and low under descent', () => {
    const k700 = levelsHpa.indexOf(700);
    let sxy = 0;
    let sxx = 0;
    let syy = 0;
    const w = fields.w.subarray(k700 * n2, (k700 + 1) * n2);
    const r = fields.r.subarray(k700 * n2, (k700 + 1) * n2);
    const mw = w.reduce((a, b) => a + b, 0) / n2;
    const mr = r.reduce((a, b) => a + b, 0) / n2;
    for (let i = 0; i < n2; i++) {
      sxy += (w[i] - mw) * (r[i] - mr);
      sxx += (w[i] - mw) ** 2;
      syy += (r[i] - mr) ** 2;
    }
    expect(sxy / Math.sqrt(sxx * syy)).toBeLessThan(-0.8);
    const ascentIdx = w.indexOf(Math.min(...w));
    const descentIdx = w.indexOf(Math.max(...w));
    expect(fields.tcc[ascentIdx]).toBeGreaterThan(80);
    expect(fields.tcc[descentIdx]).toBeLessThan(fields.tcc[ascentIdx]);
    for (const c of fields.tcc) expect(c >= 0 && c <= 100).toBe(true);
    for (const h of fields.r) expect(h >= 0 && h <= 100).toBe(true);
  });

  it('precipitation accumulates (never decreases) and walking the steps gives the same totals', () => {
    const small = gridAxes({ latSouth: 56, latNorth: 66, lonWest: 0, lonEast: 24, resolution: 2 });
    const direct = fieldsAt(ctx, small, [50000], 0, 36).tp;
    const s12 = fieldsAt(ctx, small, [50000], 0, 12);
    const s24 = fieldsAt(ctx, small, [50000], 0, 24, { runHours: 12, tp: s12.tp });
    const s36 = fieldsAt(ctx, small, [50000], 0, 36, { runHours: 24, tp: s24.tp });
    expect(Math.max(...direct)).toBeGreaterThan(1);
    for (let i = 0; i < direct.length; i++) {
      expect(s24.tp[i]).toBeGreaterThanOrEqual(s12.tp[i]);
      expect(s36.tp[i]).toBeGreaterThanOrEqual(s24.tp[i]);
      expect(Math.abs(s36.tp[i] - direct[i])).toBeLessThan(1e-4 * (1 + direct[i]));
    }
    expect(fieldsAt(ctx, small, [50000], 0, 0).tp.every((x) => x === 0)).toBe(true);
  });

  it('the wave moves east with its phase speed', () => {
    const w = BASE_WAVE;
    const lon48 = troughLongitude(w, 48);
    const km = (lon48 - w.troughLonDeg) * DEG * EARTH_RADIUS * Math.cos(w.centreLatDeg * DEG) / 1000;
    expect(km).toBeCloseTo((w.speedMs * 48 * 3600) / 1000, 3);
  });
});
