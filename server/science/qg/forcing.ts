/**
 * Right-hand sides of the QG omega equation written as
 *   (Laplacian + (f0^2/sigma) d2/dp2) omega = F,
 * the operator the solver inverts; F is in Pa s-1 m-2 (the operator applied to omega in Pa s-1). Source: Holton and Hakim, An Introduction to Dynamic
 * Meteorology (5th ed.), chapter 6 (traditional and Q-vector forms of the omega equation); Hoskins,
 * Draghici and Davies (1978). The forcing is set on interior points only and is zero on the
 * lateral boundary and the top and bottom levels, where omega is held at zero.
 */
import { ddp, horizontalLaplacian } from './differences.ts';
import { absoluteVorticityAdvection, geostrophicVorticity, geostrophicWind, qVector, qVectorDivergence, thicknessAdvection } from './fields.ts';
import { zeroBoundary, type Field, type QgGeometry } from './grid.ts';

function divideBySigma(field: Float64Array, sigma: Float64Array, g: QgGeometry): void {
  const plane = g.nx * g.ny;
  for (let k = 0; k < g.nz; k++) {
    const inv = 1 / sigma[k];
    for (let n = k * plane; n < (k + 1) * plane; n++) field[n] *= inv;
  }
}

export interface TraditionalForcing {
  /** (f0/sigma) d/dp [V_g . grad(zeta_g + f)], forcing by differential vorticity advection */
  vorticity: Float64Array;
  /** (1/sigma) Laplacian [V_g . grad(-dPhi/dp)], forcing by thickness (temperature) advection */
  thickness: Float64Array;
}

/** Traditional forcing from geopotential Phi (m2 s-2) and sigma(p) (m2 Pa-2 s-2); each part in Pa s-1 m-2. */
export function traditionalForcing(phi: Field, sigma: Float64Array, g: QgGeometry): TraditionalForcing {
  const { u, v } = geostrophicWind(phi, g);
  const zeta = geostrophicVorticity(phi, g);
  const vortAdv = absoluteVorticityAdvection(u, v, zeta, g);
  const vorticity = ddp(vortAdv, g);
  for (let n = 0; n < vorticity.length; n++) vorticity[n] *= -g.f0;
  const thickness = horizontalLaplacian(thicknessAdvection(u, v, phi, g), g);
  for (let n = 0; n < thickness.length; n++) thickness[n] = -thickness[n];
  divideBySigma(vorticity, sigma, g);
  divideBySigma(thickness, sigma, g);
  return { vorticity: zeroBoundary(vorticity, g), thickness: zeroBoundary(thickness, g) };
}

/**
 * Q-vector forcing (1/sigma) (-2 div Q + f0 beta dv_g/dp), Pa s-1 m-2, from Phi (m2 s-2) and T (K).
 * Equal to the traditional forcing when T is hydrostatic with Phi (T = -(p/R) dPhi/dp); on real
 * data the two forms also differ where the file's z and t are not exactly hydrostatic.
 */
export function qVectorForcing(phi: Field, t: Field, sigma: Float64Array, g: QgGeometry): Float64Array {
  const { u, v } = geostrophicWind(phi, g);
  const { qx, qy } = qVector(u, v, t, g);
  const forcing = qVectorDivergence(qx, qy, g);
  const dvdp = ddp(v, g);
  const fb = g.f0 * g.beta;
  for (let n = 0; n < forcing.length; n++) forcing[n] = -2 * forcing[n] + fb * dvdp[n];
  divideBySigma(forcing, sigma, g);
  return zeroBoundary(forcing, g);
}
