/**
 * The QG grid: a regular latitude-longitude grid on pressure levels, and the geometry every
 * finite difference needs (spacings in radians, cos lat at nodes and half nodes, f0, beta).
 * Layout of a 3-D field: [level][lat][lon], index k * ny * nx + j * nx + i, levels bottom
 * (high pressure) to top, latitudes south to north, longitudes west to east.
 */
import { EARTH_ANGULAR_VELOCITY, EARTH_RADIUS } from '../constants.ts';
import { EquatorialDomainError, GridError, TooFewLevelsError } from './errors.ts';

/** Axes of the input: degrees north (ascending), degrees east (ascending), Pa (descending). */
export interface QgAxes {
  lat: Float64Array;
  lon: Float64Array;
  levels: Float64Array;
}

export type Field = Float64Array | Float32Array;

export interface QgGeometry {
  nx: number;
  ny: number;
  nz: number;
  /** longitude and latitude spacing, radians */
  dlon: number;
  dlat: number;
  /** latitude of each row, radians */
  latRad: Float64Array;
  cosLat: Float64Array;
  tanLat: Float64Array;
  /** cos of the latitude halfway between row j and row j + 1 (length ny - 1) */
  cosLatHalf: Float64Array;
  /** pressure levels, Pa, bottom to top */
  levels: Float64Array;
  /** centre latitude of the domain, degrees */
  lat0: number;
  /** Coriolis parameter at lat0, s-1 */
  f0: number;
  /** meridional gradient of f at lat0, m-1 s-1 */
  beta: number;
  /** Earth radius, m */
  a: number;
}

/** Closest approach to the equator QG diagnosis accepts, degrees (SCIENCE.md section 2). */
export const EQUATOR_EXCLUSION_DEG = 10;

function checkRegular(name: string, axis: Float64Array, minPoints: number): number {
  if (axis.length < minPoints) throw new GridError(`${name} axis has ${axis.length} points; the QG solver needs at least ${minPoints}`);
  const step = (axis[axis.length - 1] - axis[0]) / (axis.length - 1);
  if (!(step > 0)) throw new GridError(`${name} axis must be strictly ascending`);
  for (let i = 1; i < axis.length; i++) {
    const d = axis[i] - axis[i - 1];
    if (Math.abs(d - step) > 1e-6 * Math.abs(step) + 1e-9) {
      throw new GridError(`${name} axis is not regular (spacing ${d} at index ${i}, expected ${step}); regrid to a regular grid first`);
    }
  }
  return step;
}

/** Builds the geometry and refuses grids QG cannot diagnose (near the equator, < 3 levels, irregular). */
export function qgGeometry(axes: QgAxes): QgGeometry {
  const { lat, lon, levels } = axes;
  if (levels.length < 3) {
    throw new TooFewLevelsError(`the omega equation needs at least 3 pressure levels (Dirichlet top and bottom plus one interior level); got ${levels.length}`);
  }
  for (let k = 1; k < levels.length; k++) {
    if (!(levels[k] < levels[k - 1])) throw new GridError('pressure levels must be strictly decreasing (bottom to top), in Pa');
  }
  if (!(levels[levels.length - 1] > 0)) throw new GridError('pressure levels must be positive, in Pa');
  const dlatDeg = checkRegular('latitude', lat, 5);
  const dlonDeg = checkRegular('longitude', lon, 5);
  const minAbsLat = lat[0] <= 0 && lat[lat.length - 1] >= 0 ? 0 : Math.min(Math.abs(lat[0]), Math.abs(lat[lat.length - 1]));
  if (minAbsLat < EQUATOR_EXCLUSION_DEG) {
    throw new EquatorialDomainError(
      `the domain reaches latitude ${minAbsLat.toFixed(2)} deg, within ${EQUATOR_EXCLUSION_DEG} deg of the equator, where quasi-geostrophic theory breaks down; crop the domain poleward of ${EQUATOR_EXCLUSION_DEG} deg`,
    );
  }
  if (Math.max(Math.abs(lat[0]), Math.abs(lat[lat.length - 1])) > 89.5) {
    throw new GridError('the domain reaches a pole, where the longitude spacing vanishes; crop it below 89.5 deg');
  }
  const ny = lat.length;
  const rad = Math.PI / 180;
  const latRad = new Float64Array(ny), cosLat = new Float64Array(ny), tanLat = new Float64Array(ny);
  const cosLatHalf = new Float64Array(ny - 1);
  for (let j = 0; j < ny; j++) {
    latRad[j] = lat[j] * rad;
    cosLat[j] = Math.cos(latRad[j]);
    tanLat[j] = Math.tan(latRad[j]);
  }
  for (let j = 0; j < ny - 1; j++) cosLatHalf[j] = Math.cos(0.5 * (latRad[j] + latRad[j + 1]));
  const lat0 = 0.5 * (lat[0] + lat[ny - 1]);
  return {
    nx: lon.length,
    ny,
    nz: levels.length,
    dlon: dlonDeg * rad,
    dlat: dlatDeg * rad,
    latRad,
    cosLat,
    tanLat,
    cosLatHalf,
    levels: Float64Array.from(levels),
    lat0,
    f0: 2 * EARTH_ANGULAR_VELOCITY * Math.sin(lat0 * rad),
    beta: (2 * EARTH_ANGULAR_VELOCITY * Math.cos(lat0 * rad)) / EARTH_RADIUS,
    a: EARTH_RADIUS,
  };
}

/**
 * Weights of the second-order three-point derivative at x of a function known at x0, x1, x2
 * (Lagrange interpolation; exact for quadratics). Works for uneven and one-sided stencils.
 */
export function threePointDerivativeWeights(x: number, x0: number, x1: number, x2: number): [number, number, number] {
  return [
    (2 * x - x1 - x2) / ((x0 - x1) * (x0 - x2)),
    (2 * x - x0 - x2) / ((x1 - x0) * (x1 - x2)),
    (2 * x - x0 - x1) / ((x2 - x0) * (x2 - x1)),
  ];
}

/** Zeroes the Dirichlet boundary (lateral edges, bottom and top levels) of a 3-D field. */
export function zeroBoundary(field: Float64Array, g: QgGeometry): Float64Array {
  const { nx, ny, nz } = g;
  const plane = nx * ny;
  field.fill(0, 0, plane);
  field.fill(0, (nz - 1) * plane);
  for (let k = 1; k < nz - 1; k++) {
    const base = k * plane;
    field.fill(0, base, base + nx);
    field.fill(0, base + (ny - 1) * nx, base + plane);
    for (let j = 1; j < ny - 1; j++) { field[base + j * nx] = 0; field[base + j * nx + nx - 1] = 0; }
  }
  return field;
}
