/**
 * Second-order finite differences on the sphere (SCIENCE.md section 2; standard centred
 * differences as in Holton and Hakim, An Introduction to Dynamic Meteorology, chapter on numerical modelling):
 * x = a cos(lat) lon, y = a lat, d/dx = 1/(a cos lat) d/dlon, d/dy = 1/a d/dlat.
 * Centred differences inside, second-order one-sided differences on the edges, so that every
 * derived field stays second-order accurate up to the lateral boundary.
 * Fields are [level][lat][lon] with any number of levels (the length fixes it).
 */
import { threePointDerivativeWeights, type Field, type QgGeometry } from './grid.ts';

/** d/dx = 1/(a cos lat) dF/dlon, in (units of F) m-1. */
export function ddx(field: Field, g: QgGeometry): Float64Array {
  const { nx, ny } = g;
  const out = new Float64Array(field.length);
  const levels = field.length / (nx * ny);
  for (let k = 0; k < levels; k++) {
    for (let j = 0; j < ny; j++) {
      const row = (k * ny + j) * nx;
      const c = 1 / (2 * g.dlon * g.a * g.cosLat[j]);
      out[row] = c * (-3 * field[row] + 4 * field[row + 1] - field[row + 2]);
      for (let i = 1; i < nx - 1; i++) out[row + i] = c * (field[row + i + 1] - field[row + i - 1]);
      const e = row + nx - 1;
      out[e] = c * (3 * field[e] - 4 * field[e - 1] + field[e - 2]);
    }
  }
  return out;
}

/** d/dy = 1/a dF/dlat, in (units of F) m-1. */
export function ddy(field: Field, g: QgGeometry): Float64Array {
  const { nx, ny } = g;
  const out = new Float64Array(field.length);
  const levels = field.length / (nx * ny);
  const c = 1 / (2 * g.dlat * g.a);
  for (let k = 0; k < levels; k++) {
    const base = k * ny * nx;
    for (let i = 0; i < nx; i++) {
      const p0 = base + i, p1 = p0 + nx, p2 = p1 + nx;
      out[p0] = c * (-3 * field[p0] + 4 * field[p1] - field[p2]);
      const e0 = base + (ny - 1) * nx + i, e1 = e0 - nx, e2 = e1 - nx;
      out[e0] = c * (3 * field[e0] - 4 * field[e1] + field[e2]);
    }
    for (let j = 1; j < ny - 1; j++) {
      const row = base + j * nx;
      for (let i = 0; i < nx; i++) out[row + i] = c * (field[row + nx + i] - field[row - nx + i]);
    }
  }
  return out;
}

/**
 * dF/dp on the (uneven) pressure levels, in (units of F) Pa-1: three-point Lagrange weights,
 * centred inside and one-sided at the bottom and top levels.
 */
export function ddp(field: Field, g: QgGeometry): Float64Array {
  const { nx, ny, nz, levels: p } = g;
  const plane = nx * ny;
  const out = new Float64Array(field.length);
  for (let k = 0; k < nz; k++) {
    const k0 = k === 0 ? 0 : k === nz - 1 ? nz - 3 : k - 1;
    const [w0, w1, w2] = threePointDerivativeWeights(p[k], p[k0], p[k0 + 1], p[k0 + 2]);
    const o = k * plane, a0 = k0 * plane, a1 = a0 + plane, a2 = a1 + plane;
    for (let n = 0; n < plane; n++) out[o + n] = w0 * field[a0 + n] + w1 * field[a1 + n] + w2 * field[a2 + n];
  }
  return out;
}

/**
 * Horizontal Laplacian on the sphere, 1/(a^2 cos^2 lat) d2F/dlon2 + 1/(a^2 cos lat) d/dlat(cos lat dF/dlat),
 * in (units of F) m-2. The compact five-point form of the omega operator inside; on the edges
 * the value is extrapolated linearly from the two nearest inside rows (second-order for smooth F).
 */
export function horizontalLaplacian(field: Field, g: QgGeometry): Float64Array {
  const { nx, ny } = g;
  const out = new Float64Array(field.length);
  const levels = field.length / (nx * ny);
  const a2 = g.a * g.a;
  for (let k = 0; k < levels; k++) {
    const base = k * ny * nx;
    for (let j = 1; j < ny - 1; j++) {
      const cx = 1 / (a2 * g.cosLat[j] * g.cosLat[j] * g.dlon * g.dlon);
      const cs = g.cosLatHalf[j - 1] / (a2 * g.cosLat[j] * g.dlat * g.dlat);
      const cn = g.cosLatHalf[j] / (a2 * g.cosLat[j] * g.dlat * g.dlat);
      const row = base + j * nx;
      for (let i = 1; i < nx - 1; i++) {
        const c = row + i, f = field[c];
        out[c] = cx * (field[c + 1] - 2 * f + field[c - 1]) + cs * (field[c - nx] - f) + cn * (field[c + nx] - f);
      }
      out[row] = 2 * out[row + 1] - out[row + 2];
      out[row + nx - 1] = 2 * out[row + nx - 2] - out[row + nx - 3];
    }
    const s0 = base, s1 = base + nx, s2 = base + 2 * nx;
    const n0 = base + (ny - 1) * nx, n1 = n0 - nx, n2 = n1 - nx;
    for (let i = 0; i < nx; i++) {
      out[s0 + i] = 2 * out[s1 + i] - out[s2 + i];
      out[n0 + i] = 2 * out[n1 + i] - out[n2 + i];
    }
  }
  return out;
}
