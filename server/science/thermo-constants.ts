/**
 * Physical constants of the column-signal thermodynamics (thermo.ts, precipitation.ts).
 * The QG constants live elsewhere; these are only what moist thermodynamics needs.
 */

/** WMO standard gravity, m s-2 (WMO; also ingest's STANDARD_GRAVITY). */
export const GRAVITY = 9.80665;

/** Gas constant of dry air, J kg-1 K-1 (value used throughout SCIENCE.md). */
export const R_DRY = 287.04;

/** Gas constant of water vapour, J kg-1 K-1 (Bolton 1980; AMS Glossary "gas constant"). */
export const R_VAPOUR = 461.5;

/** Ratio R_d / R_v, dimensionless; 0.622 as in SCIENCE.md and Bolton (1980). */
export const EPSILON = 0.622;

/** Specific heat of dry air at constant pressure, J kg-1 K-1 (SCIENCE.md section 2). */
export const CP_DRY = 1004.6;

/** Specific heat of water vapour at constant pressure, J kg-1 K-1 (Bolton 1980, ~1875; AMS Glossary). */
export const CP_VAPOUR = 1875;

/** Reference pressure for potential temperature, Pa. */
export const P0 = 1e5;

/** Kelvin offset of the Celsius scale. */
export const ZERO_CELSIUS_K = 273.15;

/**
 * Latent heat of vaporisation at 0 degC and its temperature slope,
 * L_v = (2.501 - 0.00237 Tc) 1e6 J kg-1 (Bolton 1980, eq. 2).
 */
export const LV0 = 2.501e6;
export const LV_SLOPE = -2370;
