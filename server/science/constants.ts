/**
 * Physical constants of the science chain (SCIENCE.md section 2).
 * Values as used in Holton and Hakim, An Introduction to Dynamic Meteorology (5th ed., 2013),
 * Appendix A, and common practice in synoptic diagnosis.
 */

/** Angular velocity of the Earth's rotation, s-1. */
export const EARTH_ANGULAR_VELOCITY = 7.292e-5;

/** Mean radius of the Earth, m. */
export const EARTH_RADIUS = 6.371e6;

/** Gas constant of dry air, J kg-1 K-1. */
export const DRY_AIR_GAS_CONSTANT = 287.04;

/** Specific heat of dry air at constant pressure, J kg-1 K-1. */
export const DRY_AIR_SPECIFIC_HEAT_CP = 1004.6;

/** Poisson constant R_d / c_p (dimensionless). */
export const KAPPA = DRY_AIR_GAS_CONSTANT / DRY_AIR_SPECIFIC_HEAT_CP;

/** Reference pressure of potential temperature, Pa. */
export const REFERENCE_PRESSURE = 1e5;

/** WMO standard gravity, m s-2 (converts geopotential height to geopotential). */
export const STANDARD_GRAVITY = 9.80665;
