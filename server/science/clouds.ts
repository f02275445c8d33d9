/**
 * Layer cloud cover from relative humidity and QG vertical motion (SCIENCE.md section 3).
 * Inputs [level][lat][lon] on the canonical grid (levels Pa, bottom to top); outputs
 * fractions 0..1.
 */
import { checkColumnShape, type ColumnShape } from './precipitation.ts';

export interface CloudParameters {
  /** critical RH without vertical motion, % */
  cloudCriticalRhPct: number;
  /** RH_c lowered by this many % RH at full ascent */
  cloudRhcAscentDropPct: number;
  /** RH_c raised by this many % RH at full descent */
  cloudRhcDescentRisePct: number;
  /** |omega| (Pa s-1) at which the adjustment is complete */
  cloudOmegaScalePaPerS: number;
  /** low / middle boundary, hPa (low: p > boundary) */
  cloudLowMidBoundaryHpa: number;
  /** middle / high boundary, hPa (high: p <= boundary) */
  cloudMidHighBoundaryHpa: number;
}

/** RH_c is kept inside these bounds so the Sundqvist formula stays defined (fraction). */
const RHC_MIN = 0.3;
const RHC_MAX = 0.99;

/**
 * Sundqvist et al. (1989) layer cloud cover, fraction 0..1:
 *   C = 1 - sqrt((1 - RH) / (1 - RH_c)) for RH > RH_c, else 0; RH and RH_c as fractions,
 * RH above 1 gives C = 1.
 */
export function sundqvistCloudCover(rh: number, rhCritical: number): number {
  if (!(rh > rhCritical)) return 0;
  if (rh >= 1) return 1;
  const c = 1 - Math.sqrt((1 - rh) / (1 - rhCritical));
  return Math.min(1, Math.max(0, c));
}

/**
 * Critical RH (fraction) adjusted by QG vertical motion, in the spirit of Slingo (1987), who
 * tied layer cloud to large-scale ascent: a linear ramp in omega,
 *   RH_c = RH_c0 - dAsc * min(1, -omega / omega_s)   for omega < 0 (ascent),
 *   RH_c = RH_c0 + dDesc * min(1,  omega / omega_s)  for omega > 0 (descent),
 * clipped to [0.3, 0.99]. NaN omega (no diagnosis) leaves RH_c0. omega in Pa s-1.
 */
export function criticalRelativeHumidity(omega: number, params: CloudParameters): number {
  let rhc = params.cloudCriticalRhPct / 100;
  if (omega < 0) rhc -= (params.cloudRhcAscentDropPct / 100) * Math.min(1, -omega / params.cloudOmegaScalePaPerS);
  else if (omega > 0) rhc += (params.cloudRhcDescentRisePct / 100) * Math.min(1, omega / params.cloudOmegaScalePaPerS);
  return Math.min(RHC_MAX, Math.max(RHC_MIN, rhc));
}

/**
 * Maximum-random overlap of layer covers into a total cover, fraction 0..1.
 * Source: Geleyn and Hollingsworth (1979), in the product form used by operational models:
 *   1 - C_tot = prod_k (1 - max(C_k, C_{k-1})) / (1 - min(C_{k-1}, 1 - delta)),  C_0 = 0,
 * so that adjacent cloudy layers overlap maximally and layers separated by a clear layer
 * randomly. Order of layers along the column (top-down or bottom-up) gives the same result.
 * NaN covers count as clear.
 */
export function maximumRandomOverlap(covers: ArrayLike<number>): number {
  const delta = 1e-9;
  let clear = 1;
  let previous = 0;
  for (let k = 0; k < covers.length; k++) {
    const c = Number.isNaN(covers[k]) ? 0 : Math.min(1, Math.max(0, covers[k]));
    clear *= (1 - Math.max(c, previous)) / (1 - Math.min(previous, 1 - delta));
    previous = c;
  }
  return Math.min(1, Math.max(0, 1 - clear));
}

export interface CloudCoverFields {
  /** per level, [level][lat][lon] */
  layer: Float32Array;
  /** [lat][lon] */
  total: Float32Array;
  low: Float32Array;
  middle: Float32Array;
  high: Float32Array;
}

/**
 * Layer, total, low, middle and high cloud cover for a whole grid.
 * rhPct in %, omega in Pa s-1 (QG omega; NaN where not diagnosed). Each group overlaps its
 * own layers maximum-randomly; the total overlaps all layers.
 */
export function cloudCover(rhPct: Float32Array, omega: Float32Array, shape: ColumnShape, params: CloudParameters): CloudCoverFields {
  checkColumnShape('cloudCover', { rhPct, omega }, shape);
  const { nlat, nlon, levelsPa } = shape;
  const plane = nlat * nlon;
  const nlev = levelsPa.length;
  const layer = new Float32Array(nlev * plane);
  for (let idx = 0; idx < layer.length; idx++) {
    const rh = rhPct[idx];
    layer[idx] = Number.isNaN(rh) ? 0 : sundqvistCloudCover(rh / 100, criticalRelativeHumidity(omega[idx], params));
  }
  const group = new Int8Array(nlev); // 0 low, 1 middle, 2 high
  for (let k = 0; k < nlev; k++) {
    const hpa = levelsPa[k] / 100;
    group[k] = hpa > params.cloudLowMidBoundaryHpa ? 0 : hpa > params.cloudMidHighBoundaryHpa ? 1 : 2;
  }
  const total = new Float32Array(plane);
  const bands = [new Float32Array(plane), new Float32Array(plane), new Float32Array(plane)];
  const column = new Float64Array(nlev);
  const bandColumn = new Float64Array(nlev);
  for (let n = 0; n < plane; n++) {
    for (let k = 0; k < nlev; k++) column[k] = layer[k * plane + n];
    total[n] = maximumRandomOverlap(column);
    for (let g = 0; g < 3; g++) {
      let m = 0;
      for (let k = 0; k < nlev; k++) if (group[k] === g) bandColumn[m++] = column[k];
      bands[g][n] = maximumRandomOverlap(bandColumn.subarray(0, m));
    }
  }
  return { layer, total, low: bands[0], middle: bands[1], high: bands[2] };
}
