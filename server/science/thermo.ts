/**
 * Moist thermodynamics for the column signals (SCIENCE.md section 3).
 * Scalar functions, SI units unless a name says otherwise; the grid loops live in
 * precipitation.ts and clouds.ts.
 */
import {
  CP_DRY, CP_VAPOUR, EPSILON, GRAVITY, LV0, LV_SLOPE, P0, R_DRY, ZERO_CELSIUS_K,
} from './thermo-constants.ts';

/** Bolton (1980) fit coefficients, eq. 10. */
const BOLTON_A = 17.67;
const BOLTON_B = 243.5;

/**
 * Saturation vapour pressure over liquid water, hPa, Tc in degC.
 * Source: Bolton (1980) eq. 10, e_s = 6.112 exp(17.67 Tc / (Tc + 243.5)); stated accuracy
 * 0.1 % between -35 and +35 degC. Used below 0 degC too (over water), as models do for RH.
 */
export function saturationVaporPressure(tempC: number): number {
  return 6.112 * Math.exp((BOLTON_A * tempC) / (tempC + BOLTON_B));
}

/** d(ln e_s)/dT of Bolton's formula, K-1 (analytic derivative of eq. 10). */
function logSaturationVaporPressureSlope(tempC: number): number {
  const d = tempC + BOLTON_B;
  return (BOLTON_A * BOLTON_B) / (d * d);
}

/** Latent heat of vaporisation, J kg-1, Tc in degC. Source: Bolton (1980) eq. 2. */
export function latentHeatOfVaporization(tempC: number): number {
  return LV0 + LV_SLOPE * tempC;
}

/**
 * Saturation mixing ratio, kg kg-1: r_s = eps e_s / (p - e_s).
 * tempK in K, pressurePa in Pa.
 */
export function saturationMixingRatio(tempK: number, pressurePa: number): number {
  const es = saturationVaporPressure(tempK - ZERO_CELSIUS_K) * 100;
  return (EPSILON * es) / Math.max(pressurePa - es, 1e-3 * pressurePa);
}

/**
 * Saturation specific humidity, kg kg-1: q_s = eps e_s / (p - (1 - eps) e_s)
 * (SCIENCE.md section 3; standard textbook relation). tempK in K, pressurePa in Pa.
 */
export function saturationSpecificHumidity(tempK: number, pressurePa: number): number {
  const es = saturationVaporPressure(tempK - ZERO_CELSIUS_K) * 100;
  return (EPSILON * es) / (pressurePa - (1 - EPSILON) * es);
}

/**
 * Pseudo-adiabatic (moist-adiabatic) lapse rate, K m-1, positive for cooling with height.
 * Source: AMS Glossary of Meteorology, "pseudoadiabatic lapse rate":
 *   Gamma_ps = g (1 + r)(1 + L_v r / (R_d T)) / (c_pd + r c_pv + L_v^2 r (eps + r) / (R_d T^2))
 * with r the saturation mixing ratio. L_v depends on T (Bolton 1980 eq. 2).
 */
export function moistAdiabaticLapseRate(tempK: number, pressurePa: number): number {
  const r = saturationMixingRatio(tempK, pressurePa);
  const lv = latentHeatOfVaporization(tempK - ZERO_CELSIUS_K);
  const numerator = GRAVITY * (1 + r) * (1 + (lv * r) / (R_DRY * tempK));
  const denominator = CP_DRY + r * CP_VAPOUR + (lv * lv * r * (EPSILON + r)) / (R_DRY * tempK * tempK);
  return numerator / denominator;
}

/**
 * The simpler moist-adiabatic lapse rate of the AMS Glossary ("moist-adiabatic lapse rate"),
 * K m-1: Gamma_m = g (1 + L_v r / (R_d T)) / (c_pd + L_v^2 r eps / (R_d T^2)).
 * Kept as a cross-check: the Glossary says the pseudo-adiabatic form is usually within 1 %.
 */
export function approximateMoistAdiabaticLapseRate(tempK: number, pressurePa: number): number {
  const r = saturationMixingRatio(tempK, pressurePa);
  const lv = latentHeatOfVaporization(tempK - ZERO_CELSIUS_K);
  return (GRAVITY * (1 + (lv * r) / (R_DRY * tempK))) / (CP_DRY + (lv * lv * r * EPSILON) / (R_DRY * tempK * tempK));
}

/**
 * Temperature change with pressure along the pseudo-adiabat, K Pa-1 (positive: warmer
 * at higher pressure). Hydrostatic dz = -dp / (rho g) with rho = p / (R_d T_v), so
 * dT/dp = Gamma_ps R_d T_v / (g p). Saturated air: T_v from the saturation mixing ratio.
 */
export function moistAdiabaticTemperatureSlope(tempK: number, pressurePa: number): number {
  const r = saturationMixingRatio(tempK, pressurePa);
  const virtualTemp = (tempK * (1 + r / EPSILON)) / (1 + r);
  return (moistAdiabaticLapseRate(tempK, pressurePa) * R_DRY * virtualTemp) / (GRAVITY * pressurePa);
}

/**
 * d(q_s)/dp taken along the pseudo-adiabat through (T, p), kg kg-1 Pa-1 (positive:
 * a parcel lifted to lower pressure loses q_s, which is the condensate).
 * Chain rule on q_s(T, p) = eps e_s / (p - (1 - eps) e_s):
 *   dq_s/dp = (dq_s/dT) (dT/dp)_moist + dq_s/dp|_T,
 *   dq_s/dT = q_s (d ln e_s/dT) p / (p - (1 - eps) e_s),  dq_s/dp|_T = -q_s / (p - (1 - eps) e_s).
 */
export function moistAdiabaticSaturationHumidityGradient(tempK: number, pressurePa: number): number {
  const tempC = tempK - ZERO_CELSIUS_K;
  const es = saturationVaporPressure(tempC) * 100;
  const denom = pressurePa - (1 - EPSILON) * es;
  const qs = (EPSILON * es) / denom;
  const dqsdT = (qs * logSaturationVaporPressureSlope(tempC) * pressurePa) / denom;
  const dqsdpAtConstantT = -qs / denom;
  return dqsdT * moistAdiabaticTemperatureSlope(tempK, pressurePa) + dqsdpAtConstantT;
}

/**
 * Relative humidity with respect to liquid water, percent, from specific humidity
 * (for files that carry q but not r). Vapour pressure e = q p / (eps + (1 - eps) q);
 * RH = 100 e / e_s (WMO definition uses mixing ratios; the difference is below 1 % RH
 * in the troposphere). Not clipped: supersaturation in the input stays visible.
 */
export function relativeHumidity(specificHumidity: number, tempK: number, pressurePa: number): number {
  const e = (specificHumidity * pressurePa) / (EPSILON + (1 - EPSILON) * specificHumidity);
  const es = saturationVaporPressure(tempK - ZERO_CELSIUS_K) * 100;
  return (100 * e) / es;
}

/**
 * Grid-wide relative humidity (percent) from q over [level][lat][lon] arrays; levels in Pa.
 * NaN in, NaN out.
 */
export function relativeHumidityField(
  q: Float32Array, t: Float32Array, levelsPa: ArrayLike<number>,
): Float32Array {
  const nlev = levelsPa.length;
  if (q.length !== t.length || q.length % nlev !== 0) {
    throw new RangeError(`relativeHumidityField: q (${q.length}) and t (${t.length}) must be nlev (${nlev}) x nlat x nlon`);
  }
  const plane = q.length / nlev;
  const out = new Float32Array(q.length);
  for (let k = 0; k < nlev; k++) {
    for (let n = 0; n < plane; n++) {
      const idx = k * plane + n;
      out[idx] = relativeHumidity(q[idx], t[idx], levelsPa[k]);
    }
  }
  return out;
}

/**
 * Potential temperature, K: theta = T (p0 / p)^kappa, kappa = R_d / c_p, p0 = 1000 hPa
 * (Poisson's equation; constants as in SCIENCE.md section 2).
 */
export function potentialTemperature(tempK: number, pressurePa: number): number {
  return tempK * Math.pow(P0 / pressurePa, R_DRY / CP_DRY);
}
