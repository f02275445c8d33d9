/**
 * Analytic fields for the QG tests: axes, a standard-atmosphere basic state (ICAO Doc 7488:
 * 288.15 K and 1013.25 hPa at sea level, lapse rate 6.5 K/km) and balanced waves whose
 * temperature is hydrostatic with the geopotential, T = -(p/R) dPhi/dp.
 */
import { DRY_AIR_GAS_CONSTANT as R, EARTH_ANGULAR_VELOCITY, EARTH_RADIUS, STANDARD_GRAVITY } from '../../../../server/science/constants.ts';
import type { QgAxes } from '../../../../server/science/qg/index.ts';

export const STANDARD_LEVELS = [100000, 92500, 85000, 70000, 60000, 50000, 40000, 30000, 25000, 20000, 15000, 10000];

export function axes(lat0: number, lat1: number, lon0: number, lon1: number, step: number, levels: number[]): QgAxes {
  const ny = Math.round((lat1 - lat0) / step) + 1, nx = Math.round((lon1 - lon0) / step) + 1;
  return {
    lat: Float64Array.from({ length: ny }, (_, j) => lat0 + j * step),
    lon: Float64Array.from({ length: nx }, (_, i) => lon0 + i * step),
    levels: Float64Array.from(levels),
  };
}

/** Levels uniform in s = ln(p_bottom / p) from p_bottom to p_top: uneven in p, smoothly. */
export function logLevels(count: number, bottom = 100000, top = 10000): number[] {
  const span = Math.log(bottom / top);
  return Array.from({ length: count }, (_, k) => bottom * Math.exp(-(span * k) / (count - 1)));
}

const T0 = 288.15, P0 = 101325, LAPSE = 0.0065;
const EXPONENT = (R * LAPSE) / STANDARD_GRAVITY;

/** ICAO standard atmosphere temperature at pressure p (troposphere), K. */
export function standardTemperature(p: number): number {
  return T0 * Math.pow(p / P0, EXPONENT);
}

/** Geopotential of the standard atmosphere at pressure p, m2 s-2 (hydrostatic with standardTemperature). */
export function standardGeopotential(p: number): number {
  return ((STANDARD_GRAVITY * T0) / LAPSE) * (1 - Math.pow(p / P0, EXPONENT));
}

export function coriolis(lat0Deg: number): number {
  return 2 * EARTH_ANGULAR_VELOCITY * Math.sin((lat0Deg * Math.PI) / 180);
}

/**
 * Balanced fields: Phi = Phi_std(p) - f0 a U(s) (lat - latc) + sum of W(s) shape(lon, lat), with
 * s = ln(p_bottom / p); U = u0 + u1 s + u2 s^2 and each W given with its derivative dW/ds.
 * T follows hydrostatically: T = -(p/R) dPhi/dp = (1/R) dPhi/ds.
 */
export interface WaveComponent {
  w: (s: number) => [number, number];
  shape: (lonRad: number, latRad: number) => number;
}

export interface WaveSpec {
  latc: number;
  u: [number, number, number];
  components: WaveComponent[];
  pBottom?: number;
}

export const poly = (c0: number, c1 = 0, c2 = 0) => (s: number): [number, number] => [c0 + c1 * s + c2 * s * s, c1 + 2 * c2 * s];

export function balancedFields(ax: QgAxes, spec: WaveSpec): { z: Float64Array; t: Float64Array } {
  const nx = ax.lon.length, ny = ax.lat.length, nz = ax.levels.length;
  const f0 = coriolis(0.5 * (ax.lat[0] + ax.lat[ny - 1]));
  const pb = spec.pBottom ?? 100000;
  const z = new Float64Array(nx * ny * nz), t = new Float64Array(nx * ny * nz);
  const rad = Math.PI / 180, latc = spec.latc * rad;
  for (let k = 0; k < nz; k++) {
    const p = ax.levels[k], s = Math.log(pb / p);
    const [U, dU] = poly(...spec.u)(s);
    const ws = spec.components.map((c) => c.w(s));
    for (let j = 0; j < ny; j++) {
      const lat = ax.lat[j] * rad;
      for (let i = 0; i < nx; i++) {
        const n = (k * ny + j) * nx + i;
        let phi = standardGeopotential(p) - f0 * EARTH_RADIUS * U * (lat - latc);
        let dphi = R * standardTemperature(p) - f0 * EARTH_RADIUS * dU * (lat - latc);
        spec.components.forEach((c, m) => {
          const shape = c.shape(ax.lon[i] * rad, lat);
          phi += ws[m][0] * shape;
          dphi += ws[m][1] * shape;
        });
        z[n] = phi;
        t[n] = dphi / R;
      }
    }
  }
  return { z, t };
}

export function relativeL2(a: ArrayLike<number>, b: ArrayLike<number>): number {
  let num = 0, den = 0;
  for (let n = 0; n < a.length; n++) { num += (a[n] - b[n]) ** 2; den += b[n] ** 2; }
  return Math.sqrt(num / den);
}

/** Plain (unweighted) pattern correlation over all points. */
export function correlation(a: ArrayLike<number>, b: ArrayLike<number>): number {
  let ma = 0, mb = 0;
  for (let n = 0; n < a.length; n++) { ma += a[n]; mb += b[n]; }
  ma /= a.length; mb /= b.length;
  let ab = 0, aa = 0, bb = 0;
  for (let n = 0; n < a.length; n++) { ab += (a[n] - ma) * (b[n] - mb); aa += (a[n] - ma) ** 2; bb += (b[n] - mb) ** 2; }
  return ab / Math.sqrt(aa * bb);
}
