/**
 * A synthetic, balanced atmosphere for the invented market "Nordvale": a westerly jet and a
 * baroclinic wave packet drifting east across the domain.
 *
 * Everything derives from one analytic geopotential Phi(p, lat, lon, t):
 *  - temperature from the hydrostatic relation T = -(p/R_d) dPhi/dp = (1/R_d) dPhi/dzeta with
 *    zeta = ln(p_s/p), so the QG diagnosis downstream sees balanced fields;
 *  - u, v geostrophic with the constant f0 of the domain centre (the QG definition,
 *    SCIENCE.md section 2): u = -(1/f0) dPhi/dy, v = (1/f0) dPhi/dx on the sphere.
 * Derivatives are taken from the analytic Phi by centred differences with a tiny step, so
 * the profiles can be any smooth functions without a hand-derived (and error-prone) formula.
 *
 * Omega, relative humidity, precipitation and cloud are the "model's own" fields: analytic
 * patterns placed where QG theory puts ascent (between the mid-level trough and the ridge
 * downstream), not a solution of the omega equation.
 */

export const R_D = 287.04; // J kg-1 K-1 (SCIENCE.md section 2)
export const EARTH_RADIUS = 6.371e6; // m
export const EARTH_OMEGA = 7.292e-5; // s-1
export const SURFACE_PRESSURE = 101325; // Pa: Phi_ref = 0 here

export interface Domain {
  latSouth: number;
  latNorth: number;
  lonWest: number;
  lonEast: number;
  /** grid spacing in degrees, same in both directions */
  resolution: number;
}

export const NORDVALE_DOMAIN: Domain = { latSouth: 50, latNorth: 72, lonWest: -6, lonEast: 34, resolution: 0.5 };
export const PRESSURE_LEVELS_HPA = [1000, 925, 850, 700, 600, 500, 400, 300, 250, 200, 150, 100] as const;
export const FORECAST_STEPS_H: readonly number[] = Array.from({ length: 21 }, (_, i) => i * 6);

/** Latitudes north to south and longitudes west to east (GRIB2 scanning mode 0x00 order). */
export function gridAxes(domain: Domain): { lat: Float64Array; lon: Float64Array } {
  const count = (span: number): number => {
    const n = span / domain.resolution;
    if (Math.abs(n - Math.round(n)) > 1e-9) throw new Error(`domain span ${span} is not a multiple of ${domain.resolution}`);
    return Math.round(n) + 1;
  };
  const nlat = count(domain.latNorth - domain.latSouth);
  const nlon = count(domain.lonEast - domain.lonWest);
  const lat = Float64Array.from({ length: nlat }, (_, j) => domain.latNorth - j * domain.resolution);
  const lon = Float64Array.from({ length: nlon }, (_, i) => domain.lonWest + i * domain.resolution);
  return { lat, lon };
}

/** Parameters of one run's (or one member's) wave. */
export interface WaveParameters {
  /** eastward phase speed of the wave packet, m s-1 */
  speedMs: number;
  /** scales the wave geopotential amplitude and the model ascent */
  amplitude: number;
  /** longitude of the low-level trough at the anchor time (hours 0 of validHours), degrees east */
  troughLonDeg: number;
  /** latitude of the wave packet's centre, degrees north */
  centreLatDeg: number;
  /** westward phase tilt between the surface and the tropopause, radians */
  tiltRad: number;
  /** latitude of the jet axis, degrees north */
  jetLatDeg: number;
  /** jet maximum (near 250 hPa), m s-1 */
  jetMaxMs: number;
}

export const BASE_WAVE: WaveParameters = {
  speedMs: 7,
  amplitude: 1,
  troughLonDeg: -9,
  centreLatDeg: 61,
  tiltRad: 1.5,
  jetLatDeg: 60,
  jetMaxMs: 35,
};

export interface AtmosphereContext {
  wave: WaveParameters;
  /** Coriolis parameter at the domain centre, s-1 */
  f0: number;
}

export function makeContext(domain: Domain, wave: WaveParameters): AtmosphereContext {
  const latC = ((domain.latNorth + domain.latSouth) / 2) * (Math.PI / 180);
  return { wave, f0: 2 * EARTH_OMEGA * Math.sin(latC) };
}

const DEG = Math.PI / 180;
const ZETA_TROPOPAUSE = Math.log(SURFACE_PRESSURE / 25000);
const WAVENUMBER = (2 * Math.PI) / (50 * DEG); // per radian of longitude: 50 degree wavelength

/**
 * Reference (area-mean) temperature, K, as a function of zeta = ln(p_s/p): lapse close to the
 * standard atmosphere's 6.5 K/km below a smooth tropopause near 250 hPa, isothermal above.
 * Statically stable everywhere (potential temperature rises with height).
 */
export function referenceTemperature(zeta: number): number {
  const t0 = 281;
  const tTrop = 216;
  const w = 0.12;
  const x = (ZETA_TROPOPAUSE - zeta) / w;
  const softplus = x > 30 ? x : Math.log1p(Math.exp(x));
  return tTrop + ((t0 - tTrop) / ZETA_TROPOPAUSE) * w * softplus;
}

const refPhiCache = new Map<number, number>();
/** Reference geopotential, m2 s-2: R_d times the integral of the reference temperature over zeta (Simpson). */
export function referenceGeopotential(zeta: number): number {
  const cached = refPhiCache.get(zeta);
  if (cached !== undefined) return cached;
  const n = 2000;
  const h = zeta / n;
  let sum = referenceTemperature(0) + referenceTemperature(zeta);
  for (let i = 1; i < n; i++) sum += (i % 2 === 1 ? 4 : 2) * referenceTemperature(i * h);
  const phi = R_D * (sum * h) / 3;
  if (refPhiCache.size < 100000) refPhiCache.set(zeta, phi);
  return phi;
}

/** Jet profile: westerly speed at the jet axis, m s-1, peaking near 250 hPa. */
export function jetSpeed(zeta: number, jetMax: number): number {
  return 5 + jetMax * Math.exp(-(((zeta - ZETA_TROPOPAUSE) / 0.8) ** 2));
}

/** Wave geopotential amplitude profile, m2 s-2, largest near 300 hPa. */
export function waveAmplitude(zeta: number): number {
  return 1700 * (0.3 + 0.9 * Math.exp(-(((zeta - 1.3) / 0.9) ** 2)));
}

/** Phase shift of the wave with height, radians: the trough lies further west aloft. */
export function wavePhaseTilt(zeta: number, tiltRad: number): number {
  return tiltRad * Math.tanh(zeta / 1.0);
}

/** Longitude of the low-level trough at validHours after the anchor time, degrees east. */
export function troughLongitude(wave: WaveParameters, validHours: number): number {
  const metresPerDegree = EARTH_RADIUS * Math.cos(wave.centreLatDeg * DEG) * DEG;
  return wave.troughLonDeg + (wave.speedMs * validHours * 3600) / metresPerDegree;
}

/** Amplitude growth of the baroclinic wave with time (mild, bounded). */
function growth(validHours: number): number {
  return 0.85 + 0.3 * (1 + Math.tanh((validHours - 24) / 48)) / 2;
}

/** Wave packet envelope in latitude and longitude, and the phase psi at a level. */
function wavePhase(ctx: AtmosphereContext, zeta: number, latDeg: number, lonDeg: number, validHours: number) {
  const w = ctx.wave;
  const lonC = troughLongitude(w, validHours);
  const envelope =
    Math.exp(-(((latDeg - w.centreLatDeg) / 8) ** 2)) * Math.exp(-(((lonDeg - lonC) / 24) ** 2)) * growth(validHours) * w.amplitude;
  const psi = WAVENUMBER * (lonDeg - lonC) * DEG + wavePhaseTilt(zeta, w.tiltRad);
  return { envelope, psi };
}

/** Geopotential, m2 s-2, at zeta = ln(p_s/p), latitude and longitude (degrees). */
export function geopotentialAt(ctx: AtmosphereContext, zeta: number, latDeg: number, lonDeg: number, validHours: number): number {
  const w = ctx.wave;
  const jetWidth = 7 * DEG * EARTH_RADIUS;
  const y = (latDeg - w.jetLatDeg) * DEG * EARTH_RADIUS;
  const jet = -ctx.f0 * jetWidth * jetSpeed(zeta, w.jetMaxMs) * Math.tanh(y / jetWidth);
  const { envelope, psi } = wavePhase(ctx, zeta, latDeg, lonDeg, validHours);
  return referenceGeopotential(zeta) + jet - waveAmplitude(zeta) * envelope * Math.cos(psi);
}

/** Vertical profile of the model's ascent, 0 at the surface and at 100 hPa, largest near 550 hPa. */
function ascentProfile(p: number): number {
  if (p <= 10000 || p >= SURFACE_PRESSURE) return 0;
  return Math.sin((Math.PI * (SURFACE_PRESSURE - p)) / (SURFACE_PRESSURE - 10000));
}

/** Mid-tropospheric ascent pattern in [-1, 1] (positive = ascent), following the 500 hPa phase. */
function ascentPattern(ctx: AtmosphereContext, latDeg: number, lonDeg: number, validHours: number): number {
  const { envelope, psi } = wavePhase(ctx, Math.log(SURFACE_PRESSURE / 50000), latDeg, lonDeg, validHours);
  return envelope * Math.sin(psi);
}

/** Model pressure vertical velocity omega, Pa s-1 (negative = ascent ahead of the trough). */
export function omegaAt(ctx: AtmosphereContext, p: number, latDeg: number, lonDeg: number, validHours: number): number {
  return -0.7 * ascentProfile(p) * ascentPattern(ctx, latDeg, lonDeg, validHours);
}

/** Relative humidity, %, moist in the ascent region and dry in the descent behind the trough. */
export function relativeHumidityAt(ctx: AtmosphereContext, p: number, latDeg: number, lonDeg: number, validHours: number): number {
  const zeta = Math.log(SURFACE_PRESSURE / p);
  const base = 72 - 14 * zeta;
  const moistening = 48 * Math.exp(-(((zeta - 0.5) / 0.9) ** 2)) * ascentPattern(ctx, latDeg, lonDeg, validHours);
  return Math.min(100, Math.max(3, base + moistening));
}

/** Model precipitation rate, kg m-2 h-1 (mm/h), under the ascent. */
export function precipitationRateAt(ctx: AtmosphereContext, latDeg: number, lonDeg: number, validHours: number): number {
  const a = ascentPattern(ctx, latDeg, lonDeg, validHours);
  // A little more on the western (windward) side of the domain, where the mountains are.
  const windward = 1 + 0.4 * Math.exp(-(((lonDeg - 8) / 8) ** 2));
  return a > 0.1 ? 1.5 * windward * (a - 0.1) ** 1.3 : 0;
}

/** Total cloud cover, %, from the column's humidity at 850 and 600 hPa. */
export function totalCloudCoverAt(ctx: AtmosphereContext, latDeg: number, lonDeg: number, validHours: number): number {
  const rh = Math.max(
    relativeHumidityAt(ctx, 85000, latDeg, lonDeg, validHours),
    relativeHumidityAt(ctx, 60000, latDeg, lonDeg, validHours),
  );
  return Math.min(100, Math.max(0, (100 * (rh - 45)) / 45));
}

/** All fields of one valid time on the grid; 3-D arrays are [level][lat][lon] in the given axis order. */
export interface FieldSet {
  z: Float32Array;
  t: Float32Array;
  r: Float32Array;
  u: Float32Array;
  v: Float32Array;
  w: Float32Array;
  /** precipitation accumulated since the run's reference time, kg m-2 */
  tp: Float32Array;
  /** total cloud cover, % */
  tcc: Float32Array;
}

const H_ZETA = 1e-3;
const H_DEG = 1e-3;

/** Temperature, K, from the hydrostatic relation T = (1/R_d) dPhi/dzeta (pointwise definition). */
export function temperatureAt(ctx: AtmosphereContext, zeta: number, lat: number, lon: number, hours: number): number {
  const up = geopotentialAt(ctx, zeta + H_ZETA, lat, lon, hours);
  const down = geopotentialAt(ctx, zeta - H_ZETA, lat, lon, hours);
  return (up - down) / (2 * H_ZETA * R_D);
}

/** Geostrophic wind (u, v), m s-1, with constant f0: u = -(1/f0) dPhi/dy, v = (1/f0) dPhi/dx on the sphere. */
export function geostrophicWindAt(ctx: AtmosphereContext, zeta: number, lat: number, lon: number, hours: number): [number, number] {
  const dPhiDlat = (geopotentialAt(ctx, zeta, lat + H_DEG, lon, hours) - geopotentialAt(ctx, zeta, lat - H_DEG, lon, hours)) / (2 * H_DEG * DEG);
  const dPhiDlon = (geopotentialAt(ctx, zeta, lat, lon + H_DEG, hours) - geopotentialAt(ctx, zeta, lat, lon - H_DEG, hours)) / (2 * H_DEG * DEG);
  const u = -dPhiDlat / (ctx.f0 * EARTH_RADIUS);
  const v = dPhiDlon / (ctx.f0 * EARTH_RADIUS * Math.cos(lat * DEG));
  return [u, v];
}

/** Value and centred-difference derivative of a smooth 1-D function. */
function withDerivative(fn: (x: number) => number, x: number, h: number): [number, number] {
  return [fn(x), (fn(x + h) - fn(x - h)) / (2 * h)];
}

/**
 * Geopotential is separable: Phi = Phi_ref(zeta) + J(zeta) Y(lat) - A(zeta) Elat(lat) Elon(lon) cos(psi),
 * psi = k (lon - lonC) + tilt(zeta). The grid path below evaluates the 1-D factors once per
 * level, latitude and longitude and applies the product rule; the pointwise functions above
 * are the definition it must agree with (tests/unit/demo checks that).
 */
function separableFactors(ctx: AtmosphereContext, axes: { lat: Float64Array; lon: Float64Array }, hours: number) {
  const w = ctx.wave;
  const jetWidth = 7 * DEG * EARTH_RADIUS;
  const lonC = troughLongitude(w, hours);
  const g = growth(hours) * w.amplitude;
  const yJet = (lat: number) => -ctx.f0 * jetWidth * Math.tanh(((lat - w.jetLatDeg) * DEG * EARTH_RADIUS) / jetWidth);
  const eLat = (lat: number) => Math.exp(-(((lat - w.centreLatDeg) / 8) ** 2));
  const eLon = (lon: number) => g * Math.exp(-(((lon - lonC) / 24) ** 2));
  const lat = Array.from(axes.lat, (x) => ({ y: withDerivative(yJet, x, H_DEG), e: withDerivative(eLat, x, H_DEG), cosLat: Math.cos(x * DEG) }));
  const lon = Array.from(axes.lon, (x) => ({ e: withDerivative(eLon, x, H_DEG), phase: WAVENUMBER * (x - lonC) * DEG }));
  return { lat, lon };
}

function levelFactors(ctx: AtmosphereContext, p: number) {
  const zeta = Math.log(SURFACE_PRESSURE / p);
  const ref = withDerivative(referenceGeopotential, zeta, H_ZETA);
  const jet = withDerivative((x) => jetSpeed(x, ctx.wave.jetMaxMs), zeta, H_ZETA);
  const amp = withDerivative(waveAmplitude, zeta, H_ZETA);
  const tilt = withDerivative((x) => wavePhaseTilt(x, ctx.wave.tiltRad), zeta, H_ZETA);
  return { zeta, ref, jet, amp, tilt };
}

/** The ascent pattern of ascentPattern() on the whole grid, [lat][lon]. */
function ascentGrid(ctx: AtmosphereContext, axes: { lat: Float64Array; lon: Float64Array }, hours: number): Float64Array {
  const f = separableFactors(ctx, axes, hours);
  const tilt500 = wavePhaseTilt(Math.log(SURFACE_PRESSURE / 50000), ctx.wave.tiltRad);
  const out = new Float64Array(axes.lat.length * axes.lon.length);
  for (let j = 0; j < axes.lat.length; j++) {
    for (let i = 0; i < axes.lon.length; i++) {
      out[j * axes.lon.length + i] = f.lat[j].e[0] * f.lon[i].e[0] * Math.sin(f.lon[i].phase + tilt500);
    }
  }
  return out;
}

/**
 * Evaluates every field at one valid time. `runHours` is the forecast step (precipitation
 * accumulates from the run's reference time, integrated hour by hour with the midpoint rule);
 * `validHours = anchorOffset + runHours` places the wave. `earlier` (a previous step's
 * accumulation, at a whole number of hours) lets a caller walk the steps in order.
 */
export function fieldsAt(
  ctx: AtmosphereContext,
  axes: { lat: Float64Array; lon: Float64Array },
  levelsPa: readonly number[],
  anchorOffsetHours: number,
  runHours: number,
  earlier?: { runHours: number; tp: Float32Array },
): FieldSet {
  const nlat = axes.lat.length;
  const nlon = axes.lon.length;
  const n2 = nlat * nlon;
  const n3 = levelsPa.length * n2;
  const out: FieldSet = {
    z: new Float32Array(n3), t: new Float32Array(n3), r: new Float32Array(n3),
    u: new Float32Array(n3), v: new Float32Array(n3), w: new Float32Array(n3),
    tp: new Float32Array(n2), tcc: new Float32Array(n2),
  };
  const hours = anchorOffsetHours + runHours;
  const f = separableFactors(ctx, axes, hours);
  const ascent = ascentGrid(ctx, axes, hours);
  for (let k = 0; k < levelsPa.length; k++) {
    const p = levelsPa[k];
    const L = levelFactors(ctx, p);
    const omegaScale = -0.7 * ascentProfile(p);
    const rhBase = 72 - 14 * L.zeta;
    const rhScale = 48 * Math.exp(-(((L.zeta - 0.5) / 0.9) ** 2));
    for (let j = 0; j < nlat; j++) {
      const la = f.lat[j];
      for (let i = 0; i < nlon; i++) {
        const lo = f.lon[i];
        const idx = k * n2 + j * nlon + i;
        const psi = lo.phase + L.tilt[0];
        const c = Math.cos(psi);
        const s = Math.sin(psi);
        const env = la.e[0] * lo.e[0];
        out.z[idx] = L.ref[0] + L.jet[0] * la.y[0] - L.amp[0] * env * c;
        out.t[idx] = (L.ref[1] + L.jet[1] * la.y[0] - env * (L.amp[1] * c - L.amp[0] * s * L.tilt[1])) / R_D;
        const dPhiDlat = L.jet[0] * la.y[1] - L.amp[0] * la.e[1] * lo.e[0] * c;
        const dPhiDlon = -L.amp[0] * la.e[0] * (lo.e[1] * c - lo.e[0] * s * WAVENUMBER * DEG);
        out.u[idx] = -dPhiDlat / (DEG * ctx.f0 * EARTH_RADIUS);
        out.v[idx] = dPhiDlon / (DEG * ctx.f0 * EARTH_RADIUS * la.cosLat);
        const a = ascent[j * nlon + i];
        out.w[idx] = omegaScale * a;
        out.r[idx] = Math.min(100, Math.max(3, rhBase + rhScale * a));
      }
    }
  }
  accumulatePrecipitation(ctx, axes, anchorOffsetHours, runHours, earlier, out.tp);
  for (let j = 0; j < nlat; j++) {
    for (let i = 0; i < nlon; i++) {
      out.tcc[j * nlon + i] = totalCloudCoverAt(ctx, axes.lat[j], axes.lon[i], hours);
    }
  }
  return out;
}

function accumulatePrecipitation(
  ctx: AtmosphereContext,
  axes: { lat: Float64Array; lon: Float64Array },
  anchorOffsetHours: number,
  runHours: number,
  earlier: { runHours: number; tp: Float32Array } | undefined,
  into: Float32Array,
): void {
  const acc = new Float64Array(into.length);
  if (earlier) acc.set(earlier.tp);
  for (let h = earlier ? earlier.runHours : 0; h < runHours; h++) {
    const a = ascentGrid(ctx, axes, anchorOffsetHours + h + 0.5);
    for (let i = 0; i < acc.length; i++) {
      const lon = axes.lon[i % axes.lon.length];
      const windward = 1 + 0.4 * Math.exp(-(((lon - 8) / 8) ** 2));
      acc[i] += a[i] > 0.1 ? 1.5 * windward * (a[i] - 0.1) ** 1.3 : 0;
    }
  }
  into.set(acc);
}
