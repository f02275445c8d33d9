/**
 * Solar generation per zone (SCIENCE.md section 4): solar position, clear-sky irradiance,
 * cloud attenuation, diffuse split, plane-of-array transposition, PV power, daily energy.
 * Angles in degrees at the interface, irradiance in W m-2, power in MW, energy in GWh.
 */

const RAD = Math.PI / 180;
const DEG = 180 / Math.PI;

export interface SolarPosition {
  /** apparent zenith angle (with atmospheric refraction), degrees */
  zenithDeg: number;
  /** geometric zenith angle (no refraction), degrees */
  geometricZenithDeg: number;
  /** azimuth, degrees clockwise from north (90 = east, 180 = south) */
  azimuthDeg: number;
  /** Sun-Earth distance, astronomical units */
  earthSunDistanceAu: number;
  declinationDeg: number;
  equationOfTimeMin: number;
}

/**
 * Solar zenith and azimuth for a UTC instant and a place.
 * Source: NOAA Global Monitoring Laboratory solar calculator equations, after Meeus,
 * "Astronomical Algorithms" (1991): geometric mean longitude and anomaly, equation of centre,
 * apparent longitude, corrected obliquity, declination and equation of time, then the hour
 * angle from true solar time, and NOAA's piecewise refraction approximation. The azimuth uses
 * the atan2 form (same angle as NOAA's acos form, without its loss of precision near the
 * zenith). Quoted accuracy about 0.01 degree for years 1800-2100 (NOAA).
 * latDeg north, lonDeg east, timeMs milliseconds since 1970-01-01T00:00Z.
 */
export function solarPosition(timeMs: number, latDeg: number, lonDeg: number): SolarPosition {
  const julianDay = timeMs / 86_400_000 + 2440587.5;
  const T = (julianDay - 2451545) / 36525;
  const L0 = mod360(280.46646 + T * (36000.76983 + T * 0.0003032));
  const M = 357.52911 + T * (35999.05029 - 0.0001537 * T);
  const e = 0.016708634 - T * (0.000042037 + 0.0000001267 * T);
  const Mr = M * RAD;
  const C = Math.sin(Mr) * (1.914602 - T * (0.004817 + 0.000014 * T))
    + Math.sin(2 * Mr) * (0.019993 - 0.000101 * T) + Math.sin(3 * Mr) * 0.000289;
  const trueLongitude = L0 + C;
  const trueAnomaly = M + C;
  const earthSunDistanceAu = (1.000001018 * (1 - e * e)) / (1 + e * Math.cos(trueAnomaly * RAD));
  const omegaNode = (125.04 - 1934.136 * T) * RAD;
  const apparentLongitude = (trueLongitude - 0.00569 - 0.00478 * Math.sin(omegaNode)) * RAD;
  const meanObliquity = 23 + (26 + (21.448 - T * (46.815 + T * (0.00059 - T * 0.001813))) / 60) / 60;
  const obliquity = (meanObliquity + 0.00256 * Math.cos(omegaNode)) * RAD;
  const declination = Math.asin(Math.sin(obliquity) * Math.sin(apparentLongitude));
  const y = Math.tan(obliquity / 2) ** 2;
  const L0r = L0 * RAD;
  const equationOfTimeMin = 4 * DEG * (y * Math.sin(2 * L0r) - 2 * e * Math.sin(Mr)
    + 4 * e * y * Math.sin(Mr) * Math.cos(2 * L0r) - 0.5 * y * y * Math.sin(4 * L0r)
    - 1.25 * e * e * Math.sin(2 * Mr));

  const minutesOfDay = ((timeMs % 86_400_000) + 86_400_000) % 86_400_000 / 60_000;
  const trueSolarTime = minutesOfDay + equationOfTimeMin + 4 * lonDeg;
  const hourAngle = (mod360(trueSolarTime / 4) - 180) * RAD;
  const lat = latDeg * RAD;
  const cosZenith = Math.sin(lat) * Math.sin(declination) + Math.cos(lat) * Math.cos(declination) * Math.cos(hourAngle);
  const geometricZenithDeg = Math.acos(Math.max(-1, Math.min(1, cosZenith))) * DEG;
  const azimuthDeg = mod360(
    Math.atan2(Math.sin(hourAngle), Math.cos(hourAngle) * Math.sin(lat) - Math.tan(declination) * Math.cos(lat)) * DEG + 180,
  );
  const zenithDeg = geometricZenithDeg - atmosphericRefraction(90 - geometricZenithDeg);
  return { zenithDeg, geometricZenithDeg, azimuthDeg, earthSunDistanceAu, declinationDeg: declination * DEG, equationOfTimeMin };
}

/** NOAA solar calculator's piecewise refraction correction, degrees, for a geometric elevation in degrees. */
export function atmosphericRefraction(elevationDeg: number): number {
  if (elevationDeg > 85) return 0;
  const te = Math.tan(elevationDeg * RAD);
  let arcsec: number;
  if (elevationDeg > 5) arcsec = 58.1 / te - 0.07 / te ** 3 + 0.000086 / te ** 5;
  else if (elevationDeg > -0.575) {
    const h = elevationDeg;
    arcsec = 1735 + h * (-518.2 + h * (103.4 + h * (-12.79 + h * 0.711)));
  } else arcsec = -20.772 / te;
  return arcsec / 3600;
}

function mod360(x: number): number {
  return ((x % 360) + 360) % 360;
}

/**
 * Clear-sky global horizontal irradiance, W m-2, Haurwitz (1945):
 * GHI_cs = 1098 cos z exp(-0.059 / cos z); 0 when the sun is down (z >= 90).
 */
export function clearSkyGhiHaurwitz(zenithDeg: number): number {
  const cz = Math.cos(zenithDeg * RAD);
  if (!(cz > 0)) return 0;
  return 1098 * cz * Math.exp(-0.059 / cz);
}

/**
 * Cloud attenuation of global irradiance, Kasten and Czeplak (1980):
 * GHI = GHI_cs (1 - a N^b), a = 0.75, b = 3.4, N cloud fraction 0..1 (clipped).
 */
export function cloudAttenuatedGhi(clearSkyGhi: number, cloudFraction: number, a = 0.75, b = 3.4): number {
  const n = Math.min(1, Math.max(0, cloudFraction));
  return clearSkyGhi * (1 - a * n ** b);
}

/**
 * Extraterrestrial irradiance on a plane normal to the sun, W m-2: solar constant times the
 * inverse-square eccentricity correction (1 / R^2, R the Sun-Earth distance in AU from
 * solarPosition). Solar constant 1361 W m-2 (Kopp and Lean 2011).
 */
export function extraterrestrialIrradiance(earthSunDistanceAu: number, solarConstant = 1361): number {
  return solarConstant / (earthSunDistanceAu * earthSunDistanceAu);
}

/**
 * Diffuse fraction of global irradiance from the clearness index k_t, Erbs, Klein and
 * Duffie (1982):
 *   k_t <= 0.22:        1 - 0.09 k_t
 *   0.22 < k_t <= 0.80: 0.9511 - 0.1604 k_t + 4.388 k_t^2 - 16.638 k_t^3 + 12.336 k_t^4
 *   k_t > 0.80:         0.165
 */
export function erbsDiffuseFraction(clearnessIndex: number): number {
  const kt = Math.max(0, clearnessIndex);
  if (kt <= 0.22) return 1 - 0.09 * kt;
  if (kt <= 0.8) return 0.9511 + kt * (-0.1604 + kt * (4.388 + kt * (-16.638 + kt * 12.336)));
  return 0.165;
}

export interface IrradianceComponents {
  ghi: number;
  /** diffuse horizontal */
  dhi: number;
  /** direct normal */
  dni: number;
}

/**
 * Split GHI into diffuse horizontal and direct normal with Erbs et al. (1982).
 * k_t = GHI / (E0 cos z), clipped to [0, 1]; DNI = (GHI - DHI) / cos z. Near the horizon
 * (cos z < 0.0175, z > 89 deg) everything is treated as diffuse, because k_t and DNI blow up.
 */
export function splitGhi(ghi: number, zenithDeg: number, extraterrestrial: number): IrradianceComponents {
  const cz = Math.cos(zenithDeg * RAD);
  if (!(ghi > 0) || !(cz > 0)) return { ghi: Math.max(0, ghi || 0), dhi: Math.max(0, ghi || 0), dni: 0 };
  if (cz < 0.0175) return { ghi, dhi: ghi, dni: 0 };
  const kt = Math.min(1, ghi / (extraterrestrial * cz));
  const dhi = erbsDiffuseFraction(kt) * ghi;
  const dni = Math.min(extraterrestrial, (ghi - dhi) / cz);
  return { ghi, dhi, dni };
}

export interface PlaneOrientation {
  /** tilt from horizontal, degrees, 0..90 */
  tiltDeg: number;
  /** azimuth the plane faces, degrees clockwise from north (180 = south) */
  azimuthDeg: number;
}

/** Cosine of the angle of incidence of the beam on a tilted plane (spherical trigonometry). */
export function cosAngleOfIncidence(zenithDeg: number, sunAzimuthDeg: number, plane: PlaneOrientation): number {
  const z = zenithDeg * RAD;
  const b = plane.tiltDeg * RAD;
  return Math.cos(z) * Math.cos(b) + Math.sin(z) * Math.sin(b) * Math.cos((sunAzimuthDeg - plane.azimuthDeg) * RAD);
}

/**
 * Plane-of-array irradiance, W m-2, isotropic-sky model (Liu and Jordan 1963):
 *   POA = DNI max(0, cos AOI) + DHI (1 + cos beta) / 2 + GHI albedo (1 - cos beta) / 2.
 */
export function planeOfArrayIrradiance(
  c: IrradianceComponents, zenithDeg: number, sunAzimuthDeg: number, plane: PlaneOrientation, albedo: number,
): number {
  const cb = Math.cos(plane.tiltDeg * RAD);
  const beam = c.dni * Math.max(0, cosAngleOfIncidence(zenithDeg, sunAzimuthDeg, plane));
  return beam + (c.dhi * (1 + cb)) / 2 + (c.ghi * albedo * (1 - cb)) / 2;
}

/**
 * Cell temperature, degC, NOCT model (Ross 1976; the NOCT rating of IEC 61215 at 800 W m-2,
 * 20 degC air, 1 m s-1 wind): T_cell = T_air + (NOCT - 20) / 800 * POA.
 */
export function cellTemperature(airTempC: number, poa: number, noctC: number): number {
  return airTempC + ((noctC - 20) / 800) * poa;
}

export interface PvParameters {
  capacityMw: number;
  /** power temperature coefficient, K-1 (negative) */
  gammaPerK: number;
  lossesPct: number;
  noctC: number;
}

/**
 * PV output, MW: P = P_inst (POA / 1000) (1 + gamma (T_cell - 25)) (1 - losses), never
 * negative (common practice: the STC-rated linear model, SCIENCE.md section 4).
 */
export function pvPower(poa: number, airTempC: number, pv: PvParameters): number {
  if (!(poa > 0)) return 0;
  const tCell = cellTemperature(airTempC, poa, pv.noctC);
  const p = pv.capacityMw * (poa / 1000) * (1 + pv.gammaPerK * (tCell - 25)) * (1 - pv.lossesPct / 100);
  return Math.max(0, p);
}

export interface SolarZoneSeries {
  /** reference time of the run, ms since epoch (UTC) */
  referenceTimeMs: number;
  /** output steps, hours after the reference time, ascending */
  stepsHours: number[];
  /** zone-mean total cloud cover at each step, fraction 0..1 */
  cloudFraction: ArrayLike<number>;
  /** zone-mean air temperature at each step, degC */
  airTempC: ArrayLike<number>;
  /** a representative point of the zone (its centroid), degrees */
  latDeg: number;
  lonDeg: number;
}

export interface SolarZoneParameters extends PlaneOrientation, PvParameters {
  albedo: number;
  solarConstantWm2: number;
  cloudAttenuationA: number;
  cloudAttenuationB: number;
}

export interface SolarHour {
  /** start of the hour, ms since epoch */
  startMs: number;
  ghi: number;
  poa: number;
  powerMw: number;
}

export interface SolarDay {
  /** UTC day, YYYY-MM-DD */
  day: string;
  energyGwh: number;
  /** hours of this day inside the run's step range (24 for a complete day) */
  hoursCovered: number;
}

/** Linear interpolation of a step series at `hours` (inside the step range). */
function interpolateSteps(stepsHours: number[], values: ArrayLike<number>, hours: number): number {
  let i = 0;
  while (i + 2 < stepsHours.length && stepsHours[i + 1] < hours) i++;
  const w = (hours - stepsHours[i]) / (stepsHours[i + 1] - stepsHours[i]);
  return values[i] + w * (values[i + 1] - values[i]);
}

/**
 * Hourly PV output and energy per UTC day for one zone. Each whole UTC hour inside the step
 * range is evaluated at its midpoint: cloud cover and temperature interpolated linearly between
 * model output steps, sun position, Haurwitz clear sky, Kasten-Czeplak attenuation, Erbs split,
 * isotropic transposition, NOCT cell temperature, PV power; energy = power x 1 h.
 */
export function solarZoneEnergy(series: SolarZoneSeries, zone: SolarZoneParameters): { hours: SolarHour[]; days: SolarDay[] } {
  const { stepsHours, cloudFraction, airTempC } = series;
  if (stepsHours.length < 2 || cloudFraction.length !== stepsHours.length || airTempC.length !== stepsHours.length) {
    throw new RangeError(`solarZoneEnergy: need at least 2 steps with one cloud and one temperature value each (steps ${stepsHours.length}, cloud ${cloudFraction.length}, temperature ${airTempC.length})`);
  }
  const hourMs = 3_600_000;
  const firstMs = series.referenceTimeMs + stepsHours[0] * hourMs;
  const lastMs = series.referenceTimeMs + stepsHours[stepsHours.length - 1] * hourMs;
  const hours: SolarHour[] = [];
  const byDay = new Map<string, SolarDay>();
  for (let start = Math.ceil(firstMs / hourMs) * hourMs; start + hourMs <= lastMs; start += hourMs) {
    const mid = start + hourMs / 2;
    const h = (mid - series.referenceTimeMs) / hourMs;
    const cloud = interpolateSteps(stepsHours, cloudFraction, h);
    const temp = interpolateSteps(stepsHours, airTempC, h);
    const sun = solarPosition(mid, series.latDeg, series.lonDeg);
    const ghi = cloudAttenuatedGhi(clearSkyGhiHaurwitz(sun.zenithDeg), cloud, zone.cloudAttenuationA, zone.cloudAttenuationB);
    const parts = splitGhi(ghi, sun.zenithDeg, extraterrestrialIrradiance(sun.earthSunDistanceAu, zone.solarConstantWm2));
    const poa = planeOfArrayIrradiance(parts, sun.zenithDeg, sun.azimuthDeg, zone, zone.albedo);
    const powerMw = pvPower(poa, temp, zone);
    hours.push({ startMs: start, ghi, poa, powerMw });
    const day = new Date(start).toISOString().slice(0, 10);
    const entry = byDay.get(day) ?? { day, energyGwh: 0, hoursCovered: 0 };
    entry.energyGwh += powerMw / 1000; // MW x 1 h = MWh; / 1000 = GWh
    entry.hoursCovered += 1;
    byDay.set(day, entry);
  }
  return { hours, days: [...byDay.values()] };
}
