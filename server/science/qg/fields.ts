/**
 * Quasi-geostrophic fields on pressure levels, one function per quantity.
 * Source for the definitions: Holton and Hakim, An Introduction to Dynamic Meteorology
 * (5th ed., 2013), chapter 6 (quasi-geostrophic analysis); Q-vectors: Hoskins, Draghici and
 * Davies (1978), Q. J. R. Meteorol. Soc. 104, 31-38. f0 is constant (the domain centre's
 * value) and the variation of f enters only through a constant beta, as QG theory assumes.
 */
import { DRY_AIR_GAS_CONSTANT, KAPPA, REFERENCE_PRESSURE } from '../constants.ts';
import { ddp, ddx, ddy, horizontalLaplacian } from './differences.ts';
import { threePointDerivativeWeights, type Field, type QgGeometry } from './grid.ts';

/** Geostrophic wind u_g = -(1/f0) dPhi/dy, v_g = (1/f0) dPhi/dx, m s-1, from Phi in m2 s-2. */
export function geostrophicWind(phi: Field, g: QgGeometry): { u: Float64Array; v: Float64Array } {
  const u = ddy(phi, g);
  const v = ddx(phi, g);
  const inv = 1 / g.f0;
  for (let n = 0; n < u.length; n++) { u[n] *= -inv; v[n] *= inv; }
  return { u, v };
}

/** Geostrophic relative vorticity zeta_g = Laplacian(Phi) / f0, s-1. */
export function geostrophicVorticity(phi: Field, g: QgGeometry): Float64Array {
  const zeta = horizontalLaplacian(phi, g);
  const inv = 1 / g.f0;
  for (let n = 0; n < zeta.length; n++) zeta[n] *= inv;
  return zeta;
}

/**
 * Advection of geostrophic absolute vorticity, -V_g . grad(zeta_g + f), s-2 (positive where
 * the advection raises the absolute vorticity). V_g . grad f is taken as beta v_g (beta plane).
 */
export function absoluteVorticityAdvection(u: Float64Array, v: Float64Array, zeta: Float64Array, g: QgGeometry): Float64Array {
  const zx = ddx(zeta, g), zy = ddy(zeta, g);
  const out = new Float64Array(zeta.length);
  for (let n = 0; n < out.length; n++) out[n] = -(u[n] * zx[n] + v[n] * (zy[n] + g.beta));
  return out;
}

/**
 * Thickness advection -V_g . grad(-dPhi/dp), m3 kg-1 s-1 (-dPhi/dp = R T / p is the specific
 * volume; positive values are warm advection).
 */
export function thicknessAdvection(u: Float64Array, v: Float64Array, phi: Field, g: QgGeometry): Float64Array {
  const thickness = ddp(phi, g);
  for (let n = 0; n < thickness.length; n++) thickness[n] = -thickness[n];
  const tx = ddx(thickness, g), ty = ddy(thickness, g);
  const out = new Float64Array(thickness.length);
  for (let n = 0; n < out.length; n++) out[n] = -(u[n] * tx[n] + v[n] * ty[n]);
  return out;
}

/** Area-mean (cos lat weighted) profile of a 3-D field, one value per level. */
export function areaMeanProfile(field: Field, g: QgGeometry): Float64Array {
  const { nx, ny, nz } = g;
  const out = new Float64Array(nz);
  let wsum = 0;
  for (let j = 0; j < ny; j++) wsum += g.cosLat[j] * nx;
  for (let k = 0; k < nz; k++) {
    let s = 0;
    for (let j = 0; j < ny; j++) {
      let row = 0;
      const o = (k * ny + j) * nx;
      for (let i = 0; i < nx; i++) row += field[o + i];
      s += g.cosLat[j] * row;
    }
    out[k] = s / wsum;
  }
  return out;
}

/** Floor for sigma when the mean profile is neutral or superadiabatic, m2 Pa-2 s-2 (about 5 % of the mid-tropospheric value). */
export const MIN_STATIC_STABILITY = 1e-7;

/**
 * Static stability sigma(p) = -(R_d T / p) d(ln theta)/dp, m2 Pa-2 s-2, with theta = T (p0/p)^kappa,
 * from a temperature profile T(p) in K on levels in Pa (Holton and Hakim,
 * chapter 6, where sigma is defined in isobaric coordinates). Levels where sigma <= MIN_STATIC_STABILITY are clamped to it and named in `clamped`.
 */
export function staticStability(levels: Float64Array, temperature: Float64Array): { sigma: Float64Array; clamped: number[] } {
  const nz = levels.length;
  const lnTheta = new Float64Array(nz);
  for (let k = 0; k < nz; k++) lnTheta[k] = Math.log(temperature[k]) + KAPPA * Math.log(REFERENCE_PRESSURE / levels[k]);
  const sigma = new Float64Array(nz);
  const clamped: number[] = [];
  for (let k = 0; k < nz; k++) {
    const k0 = k === 0 ? 0 : k === nz - 1 ? nz - 3 : k - 1;
    const [w0, w1, w2] = threePointDerivativeWeights(levels[k], levels[k0], levels[k0 + 1], levels[k0 + 2]);
    const dlnTheta = w0 * lnTheta[k0] + w1 * lnTheta[k0 + 1] + w2 * lnTheta[k0 + 2];
    sigma[k] = -((DRY_AIR_GAS_CONSTANT * temperature[k]) / levels[k]) * dlnTheta;
    if (!(sigma[k] > MIN_STATIC_STABILITY)) { sigma[k] = MIN_STATIC_STABILITY; clamped.push(k); }
  }
  return { sigma, clamped };
}

/**
 * Q-vector Q = -(R/p) (dV_g/dx . grad T, dV_g/dy . grad T), m Pa-1 s-3 (Hoskins, Draghici and
 * Davies 1978; Holton and Hakim chapter 6). On the sphere dV_g/dx is the covariant
 * derivative of the wind vector, (du/dx - v tan(lat)/a, dv/dx + u tan(lat)/a): with it the
 * Q-vector form equals the traditional form exactly in the continuum, also on the sphere.
 */
export function qVector(u: Float64Array, v: Float64Array, t: Field, g: QgGeometry): { qx: Float64Array; qy: Float64Array } {
  const { nx, ny } = g;
  const ux = ddx(u, g), vx = ddx(v, g), uy = ddy(u, g), vy = ddy(v, g);
  const tx = ddx(t, g), ty = ddy(t, g);
  const qx = new Float64Array(u.length), qy = new Float64Array(u.length);
  const levels = u.length / (nx * ny);
  for (let k = 0; k < levels; k++) {
    const rp = DRY_AIR_GAS_CONSTANT / g.levels[k];
    for (let j = 0; j < ny; j++) {
      const metric = g.tanLat[j] / g.a;
      const row = (k * ny + j) * nx;
      for (let n = row; n < row + nx; n++) {
        const dudx = ux[n] - v[n] * metric, dvdx = vx[n] + u[n] * metric;
        qx[n] = -rp * (dudx * tx[n] + dvdx * ty[n]);
        qy[n] = -rp * (uy[n] * tx[n] + vy[n] * ty[n]);
      }
    }
  }
  return { qx, qy };
}

/** Divergence of a horizontal vector on the sphere, 1/(a cos lat) [dQx/dlon + d(Qy cos lat)/dlat], (units of Q) m-1. */
export function qVectorDivergence(qx: Float64Array, qy: Float64Array, g: QgGeometry): Float64Array {
  const { nx, ny } = g;
  const scaled = new Float64Array(qy.length);
  const rows = qy.length / nx;
  for (let r = 0; r < rows; r++) {
    const c = g.cosLat[r % ny];
    for (let n = r * nx; n < (r + 1) * nx; n++) scaled[n] = qy[n] * c;
  }
  const dx = ddx(qx, g), dy = ddy(scaled, g);
  for (let r = 0; r < rows; r++) {
    const inv = 1 / g.cosLat[r % ny];
    for (let n = r * nx; n < (r + 1) * nx; n++) dx[n] += dy[n] * inv;
  }
  return dx;
}
