/**
 * Precipitation from synoptic ascent by the condensation-rate method (SCIENCE.md section 3).
 *
 * Grid-wide functions: inputs are [level][lat][lon] Float32Arrays on the canonical grid
 * (levels in Pa, bottom to top), outputs are [lat][lon] Float32Arrays.
 */
import { moistAdiabaticSaturationHumidityGradient } from './thermo.ts';
import { GRAVITY, ZERO_CELSIUS_K } from './thermo-constants.ts';

export interface ColumnShape {
  nlat: number;
  nlon: number;
  /** pressure levels, Pa, bottom (high p) to top */
  levelsPa: ArrayLike<number>;
}

export interface PrecipitationParameters {
  /** RH (%) where the condensation weight starts to rise from 0 */
  precipCriticalRhPct: number;
  /** precipitation efficiency E, 0..1 */
  precipEfficiency: number;
}

export interface RainSnowParameters {
  rainSnowLevel: '850hPa' | 'lowest';
  /** all snow at or below this temperature, degC */
  snowAllBelowC: number;
  /** all rain at or above this temperature, degC */
  rainAllAboveC: number;
}

export class SignalInputError extends Error {
  constructor(message: string) {
    super(message);
    this.name = 'SignalInputError';
  }
}

export function checkColumnShape(what: string, fields: Record<string, Float32Array>, shape: ColumnShape): void {
  const { nlat, nlon, levelsPa } = shape;
  if (levelsPa.length < 2) throw new SignalInputError(`${what}: needs at least 2 pressure levels, got ${levelsPa.length}`);
  for (let k = 1; k < levelsPa.length; k++) {
    if (!(levelsPa[k] < levelsPa[k - 1])) {
      throw new SignalInputError(`${what}: pressure levels must run bottom to top (strictly decreasing Pa); level ${k} is ${levelsPa[k]} after ${levelsPa[k - 1]}`);
    }
  }
  const expected = levelsPa.length * nlat * nlon;
  for (const [name, field] of Object.entries(fields)) {
    if (field.length !== expected) {
      throw new SignalInputError(`${what}: ${name} has ${field.length} values, expected ${levelsPa.length} levels x ${nlat} x ${nlon} = ${expected}`);
    }
  }
}

/**
 * Saturation weight F(RH), 0..1: a linear ramp from 0 at the critical RH to 1 at
 * saturation, F = clamp((RH - RH_crit) / (100 - RH_crit), 0, 1), RH in %.
 * Why a ramp: a grid box condenses before its mean RH reaches 100 % (sub-grid variability).
 */
export function saturationWeight(rhPct: number, criticalRhPct: number): number {
  if (!(rhPct > criticalRhPct)) return 0;
  return Math.min(1, (rhPct - criticalRhPct) / (100 - criticalRhPct));
}

/**
 * Condensation-rate precipitation, kg m-2 s-1 (= mm s-1), per column:
 *   P = (E / g) * integral over p of max(0, -omega) (dq_s/dp)_moist F(RH) dp,
 * the integrand evaluated at each level with (dq_s/dp) along the pseudo-adiabat through the
 * level's T and p (thermo.ts), integrated by the trapezoid rule over the given levels.
 * A level where t, rh or omega is NaN (missing, below ground) contributes nothing.
 * Source of the method: condensation rate -omega dq_s/dp along the moist adiabat
 * (standard textbook result; SCIENCE.md section 3).
 * t in K, rhPct in %, omega in Pa s-1.
 */
export function condensationPrecipitationRate(
  t: Float32Array, rhPct: Float32Array, omega: Float32Array,
  shape: ColumnShape, params: PrecipitationParameters,
): Float32Array {
  checkColumnShape('condensationPrecipitationRate', { t, rhPct, omega }, shape);
  const { nlat, nlon, levelsPa } = shape;
  const plane = nlat * nlon;
  const nlev = levelsPa.length;
  const integrand = new Float64Array(nlev * plane);
  for (let k = 0; k < nlev; k++) {
    const p = levelsPa[k];
    for (let n = 0; n < plane; n++) {
      const idx = k * plane + n;
      const w = omega[idx];
      if (!(w < 0)) continue; // no ascent, or NaN
      const weight = saturationWeight(rhPct[idx], params.precipCriticalRhPct);
      if (weight === 0 || Number.isNaN(t[idx])) continue;
      integrand[idx] = -w * moistAdiabaticSaturationHumidityGradient(t[idx], p) * weight;
    }
  }
  const out = new Float32Array(plane);
  const factor = params.precipEfficiency / GRAVITY;
  for (let n = 0; n < plane; n++) {
    let sum = 0;
    for (let k = 0; k + 1 < nlev; k++) {
      sum += 0.5 * (integrand[k * plane + n] + integrand[(k + 1) * plane + n]) * (levelsPa[k] - levelsPa[k + 1]);
    }
    out[n] = factor * sum;
  }
  return out;
}

/**
 * Accumulation over each output interval, mm, from rates (mm s-1) at the output times:
 * trapezoid in time, acc_i = (P_i + P_{i+1}) / 2 * (t_{i+1} - t_i). Returns one [lat][lon]
 * field per interval (steps.length - 1 of them). stepsHours ascending.
 */
export function accumulatePrecipitation(ratesMmPerS: Float32Array[], stepsHours: number[]): Float32Array[] {
  if (ratesMmPerS.length !== stepsHours.length) {
    throw new SignalInputError(`accumulatePrecipitation: ${ratesMmPerS.length} rate fields for ${stepsHours.length} steps`);
  }
  const out: Float32Array[] = [];
  for (let i = 0; i + 1 < stepsHours.length; i++) {
    const dt = (stepsHours[i + 1] - stepsHours[i]) * 3600;
    if (!(dt > 0)) throw new SignalInputError(`accumulatePrecipitation: steps must ascend; step ${stepsHours[i + 1]} h follows ${stepsHours[i]} h`);
    const a = ratesMmPerS[i];
    const b = ratesMmPerS[i + 1];
    if (a.length !== b.length) throw new SignalInputError('accumulatePrecipitation: rate fields differ in size');
    const acc = new Float32Array(a.length);
    for (let n = 0; n < a.length; n++) acc[n] = 0.5 * (a[n] + b[n]) * dt;
    out.push(acc);
  }
  return out;
}

/**
 * Interval amounts, mm, from a model's running total since the reference time (e.g. GRIB tp,
 * kg m-2): differences of successive steps, clipped at 0 (packing noise can make them
 * slightly negative). For the ratio diagnosed / model that calibrates E.
 */
export function intervalsFromRunningTotal(runningTotals: Float32Array[]): Float32Array[] {
  const out: Float32Array[] = [];
  for (let i = 0; i + 1 < runningTotals.length; i++) {
    const a = runningTotals[i];
    const b = runningTotals[i + 1];
    const d = new Float32Array(a.length);
    for (let n = 0; n < a.length; n++) d[n] = Math.max(0, b[n] - a[n]);
    out.push(d);
  }
  return out;
}

/**
 * Snow share of precipitation, 0..1: 1 at or below snowAllBelowC, 0 at or above
 * rainAllAboveC, linear in between (a documented temperature ramp; common practice).
 */
export function snowShare(tempC: number, params: RainSnowParameters): number {
  if (Number.isNaN(tempC)) return Number.NaN;
  if (tempC <= params.snowAllBelowC) return 1;
  if (tempC >= params.rainAllAboveC) return 0;
  return (params.rainAllAboveC - tempC) / (params.rainAllAboveC - params.snowAllBelowC);
}

/**
 * Temperature (K) of the rain/snow level per column: 850 hPa (interpolated linearly in ln p
 * between the bracketing levels when 850 hPa is not a level) or the lowest level with data.
 */
export function rainSnowLevelTemperature(t: Float32Array, shape: ColumnShape, level: RainSnowParameters['rainSnowLevel']): Float32Array {
  checkColumnShape('rainSnowLevelTemperature', { t }, shape);
  const { nlat, nlon, levelsPa } = shape;
  const plane = nlat * nlon;
  const out = new Float32Array(plane);
  if (level === 'lowest') {
    for (let n = 0; n < plane; n++) {
      let value = Number.NaN;
      for (let k = 0; k < levelsPa.length && Number.isNaN(value); k++) value = t[k * plane + n];
      out[n] = value;
    }
    return out;
  }
  const target = 85000;
  let kb = -1;
  for (let k = 0; k + 1 < levelsPa.length; k++) if (levelsPa[k] >= target && levelsPa[k + 1] <= target) { kb = k; break; }
  if (kb < 0) {
    throw new SignalInputError(`rainSnowLevelTemperature: 850 hPa is outside the levels (${levelsPa[0] / 100}..${levelsPa[levelsPa.length - 1] / 100} hPa); use rainSnowLevel 'lowest'`);
  }
  const w = Math.log(levelsPa[kb] / target) / Math.log(levelsPa[kb] / levelsPa[kb + 1]);
  for (let n = 0; n < plane; n++) out[n] = (1 - w) * t[kb * plane + n] + w * t[(kb + 1) * plane + n];
  return out;
}

/** Snow share field, 0..1, [lat][lon], from the [level][lat][lon] temperature (K). */
export function snowShareField(t: Float32Array, shape: ColumnShape, params: RainSnowParameters): Float32Array {
  const levelT = rainSnowLevelTemperature(t, shape, params.rainSnowLevel);
  const out = new Float32Array(levelT.length);
  for (let n = 0; n < levelT.length; n++) out[n] = snowShare(levelT[n] - ZERO_CELSIUS_K, params);
  return out;
}

/**
 * Rain and snow amounts, mm, of an accumulation field split by a snow share field (both
 * [lat][lon]). The share of an interval is the caller's choice (e.g. the mean of its two ends).
 */
export function splitRainSnow(accumulationMm: Float32Array, snowShareFraction: Float32Array): { rainMm: Float32Array; snowMm: Float32Array } {
  if (accumulationMm.length !== snowShareFraction.length) {
    throw new SignalInputError(`splitRainSnow: ${accumulationMm.length} accumulation values but ${snowShareFraction.length} snow shares`);
  }
  const rainMm = new Float32Array(accumulationMm.length);
  const snowMm = new Float32Array(accumulationMm.length);
  for (let n = 0; n < accumulationMm.length; n++) {
    snowMm[n] = accumulationMm[n] * snowShareFraction[n];
    rainMm[n] = accumulationMm[n] - snowMm[n];
  }
  return { rainMm, snowMm };
}

/**
 * Ratio of diagnosed to model precipitation over the same interval and region, the number a
 * forecaster calibrates E with. Below `minimumModelMm` (default 0.1 mm, a trace) the ratio
 * means nothing and is NaN.
 */
export function diagnosedToModelRatio(diagnosedMm: number, modelMm: number, minimumModelMm = 0.1): number {
  return modelMm >= minimumModelMm ? diagnosedMm / modelMm : Number.NaN;
}
