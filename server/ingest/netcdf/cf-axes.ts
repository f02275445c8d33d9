/**
 * Coordinate axes under the CF conventions (CF Metadata Conventions, sections 4 and 5):
 * which dimension is latitude, longitude, pressure, time or ensemble member, and how each
 * maps onto the canonical orientation (south->north, west->east from [-180,180), bottom->top).
 */
import { IngestError } from '../canonical.ts';
import { numberAttr, textAttr, type NcSource, type NcVariable } from './source.ts';

export type AxisKind = 'lat' | 'lon' | 'level' | 'time' | 'period' | 'member';

const LAT_UNITS = /^degrees?_?n(orth)?$/i;
const LON_UNITS = /^degrees?_?e(ast)?$/i;
const PRESSURE_UNITS: Record<string, number> = { pa: 1, hpa: 100, mbar: 100, millibar: 100, millibars: 100, mb: 100, kpa: 1000 };
const MEMBER_NAMES = new Set(['member', 'members', 'number', 'ensemble', 'realization', 'ens', 'ensemble_member', 'mem']);
const LEVEL_NAMES = new Set(['level', 'levels', 'lev', 'plev', 'isobaric', 'isobaricinhpa', 'pressure', 'pressure_level', 'pressure_levels', 'pres']);
const DURATION_HOURS: Record<string, number> = { second: 1 / 3600, minute: 1 / 60, hour: 1, day: 24 };

/** The 1-D coordinate variable of a dimension (same name, that dimension only), if any. */
export function coordinateVariable(src: NcSource, dim: string): NcVariable | null {
  const v = src.variables.get(dim);
  return v && v.dims.length === 1 && v.dims[0] === dim ? v : null;
}

function unitsOf(v: NcVariable | null): string {
  return v ? (textAttr(v.attrs, 'units') ?? '') : '';
}

export function durationHours(unit: string): number | null {
  const u = unit.toLowerCase().replace(/s$/, '');
  const aliases: Record<string, string> = { sec: 'second', s: 'second', min: 'minute', hr: 'hour', h: 'hour', d: 'day' };
  return DURATION_HOURS[aliases[u] ?? u] ?? null;
}

/** Pa per unit of a pressure axis, or null when the units are not a pressure. */
export function pressureFactor(units: string): number | null {
  return PRESSURE_UNITS[units.trim().toLowerCase()] ?? null;
}

/** What a dimension is, judged from its coordinate variable: standard_name, axis, units, then name. */
export function classifyDimension(src: NcSource, dim: string): AxisKind | null {
  const cv = coordinateVariable(src, dim);
  const sn = cv ? (textAttr(cv.attrs, 'standard_name') ?? '') : '';
  const axis = cv ? (textAttr(cv.attrs, 'axis') ?? '').toUpperCase() : '';
  const units = unitsOf(cv);
  const name = dim.toLowerCase();
  if (sn === 'grid_latitude' || sn === 'grid_longitude' || sn === 'projection_x_coordinate' || sn === 'projection_y_coordinate') {
    throw new IngestError(`axis ${dim}`, `standard_name ${sn}: rotated or projected grids are not supported; regrid to a regular latitude-longitude grid (e.g. \`cdo remapbil\`)`);
  }
  if (sn === 'latitude' || LAT_UNITS.test(units)) return 'lat';
  if (sn === 'longitude' || LON_UNITS.test(units)) return 'lon';
  if (sn === 'air_pressure' || pressureFactor(units) !== null) return 'level';
  if (sn === 'realization' || MEMBER_NAMES.has(name)) return 'member';
  if (sn === 'forecast_period' || ((name === 'step' || name === 'forecast_period') && durationHours(units) !== null)) return 'period';
  if (sn === 'time' || axis === 'T' || /\bsince\b/i.test(units)) return 'time';
  if (axis === 'Y') return 'lat';
  if (axis === 'X') return 'lon';
  if (axis === 'Z') {
    throw new IngestError(`axis ${dim}`, `the vertical axis has units "${units}", not pressure: only pressure-level data (Pa, hPa) are supported`);
  }
  if (name === 'lat' || name === 'latitude') return 'lat';
  if (name === 'lon' || name === 'longitude') return 'lon';
  if (LEVEL_NAMES.has(name)) return 'level';
  if (name === 'time') return 'time';
  return null;
}

/** Reads a whole 1-D coordinate variable as numbers (coordinate axes are small). */
export async function readCoordinate(src: NcSource, v: NcVariable): Promise<Float64Array> {
  const raw = await src.read(v, v.shape.map(() => 0), v.shape.slice());
  const scale = numberAttr(v.attrs, 'scale_factor')?.[0] ?? 1;
  const offset = numberAttr(v.attrs, 'add_offset')?.[0] ?? 0;
  return Float64Array.from(raw as ArrayLike<number | bigint>, (x) => Number(x) * scale + offset);
}

/** An axis as canonical values plus, for each canonical position, the index in the file. */
export interface MappedAxis {
  dim: string;
  values: Float64Array;
  index: Int32Array;
}

const TOL = 1e-3;

function uniformStep(diffs: number[], dim: string, what: string): number {
  const step = diffs.reduce((a, b) => a + b, 0) / diffs.length;
  for (const d of diffs) {
    if (Math.abs(d - step) > TOL * Math.abs(step) + 1e-9) {
      throw new IngestError(`axis ${dim}`, `irregular ${what} spacing (steps from ${Math.min(...diffs)} to ${Math.max(...diffs)} degrees): only regular grids are supported (a Gaussian grid must be regridded, e.g. \`cdo remapbil\`)`);
    }
  }
  return step;
}

/** Latitudes ascending (south to north); a north-to-south axis is flipped. */
export function mapLatitude(dim: string, raw: Float64Array): MappedAxis {
  const n = raw.length;
  for (const x of raw) if (!(x >= -90 - TOL && x <= 90 + TOL)) throw new IngestError(`axis ${dim}`, `latitude ${x} is outside -90..90`);
  const index = Int32Array.from({ length: n }, (_, i) => i);
  if (n > 1) {
    const diffs = Array.from({ length: n - 1 }, (_, i) => raw[i + 1] - raw[i]);
    const step = uniformStep(diffs, dim, 'latitude');
    if (step === 0) throw new IngestError(`axis ${dim}`, 'repeated latitudes');
    if (step < 0) index.reverse();
  }
  return { dim, values: Float64Array.from(index, (i) => raw[i]), index };
}

const mod360 = (x: number) => ((x % 360) + 360) % 360;
const wrap180 = (x: number) => mod360(x + 180) - 180;

/**
 * Longitudes west to east, contiguous, the first in [-180, 180). A domain stored across the
 * 0/360 seam (340, 350, 0, 10) or sorted with a gap (0, 10, 340, 350) is put in order; a
 * global grid is rotated to start at the first longitude at or after -180.
 */
export function mapLongitude(dim: string, raw: Float64Array): MappedAxis {
  const n = raw.length;
  let order = Array.from({ length: n }, (_, i) => i);
  if (n > 1) {
    const signed = Array.from({ length: n - 1 }, (_, i) => wrap180(raw[i + 1] - raw[i]));
    if (signed.filter((d) => d < 0).length > signed.length / 2) order.reverse();
    const v = order.map((i) => raw[i]);
    // cyclic steps, the last one closing the circle; a regular axis has at most one gap
    const cyc = v.map((x, i) => mod360(v[(i + 1) % n] - x));
    const sorted = [...cyc].sort((a, b) => a - b);
    const step = sorted[Math.floor((n - 1) / 2)];
    if (step === 0) throw new IngestError(`axis ${dim}`, 'repeated longitudes');
    const gaps = cyc.map((d, i) => (Math.abs(d - step) > TOL * step + 1e-9 ? i : -1)).filter((i) => i >= 0);
    if (gaps.length > 1) {
      uniformStep(signed.map(Math.abs), dim, 'longitude');
      throw new IngestError(`axis ${dim}`, 'longitudes are not contiguous');
    }
    if (gaps.length === 1 && cyc[gaps[0]] < step) throw new IngestError(`axis ${dim}`, `longitudes overlap: ${n} points of ${step} degrees span more than 360`);
    let first = gaps.length === 1 ? (gaps[0] + 1) % n : 0;
    if (gaps.length === 0) {
      // global: start at the point nearest above -180
      first = v.reduce((best, x, i) => (wrap180(x) < wrap180(v[best]) ? i : best), 0);
    }
    order = Array.from({ length: n }, (_, j) => order[(first + j) % n]);
  }
  const values = new Float64Array(n);
  values[0] = n > 0 ? wrap180(raw[order[0]]) : 0;
  for (let j = 1; j < n; j++) values[j] = values[0] + mod360(raw[order[j]] - raw[order[0]]);
  return { dim, values, index: Int32Array.from(order) };
}

/** Pressure values of a level axis in Pa, in file order. */
export function levelsInPa(dim: string, cv: NcVariable | null, raw: Float64Array): Float64Array {
  const units = unitsOf(cv);
  let factor = units === '' ? null : pressureFactor(units);
  if (units !== '' && factor === null) throw new IngestError(`axis ${dim}`, `units "${units}" are not a pressure`);
  // without units, model pressure levels in hPa never exceed ~1100
  factor ??= Math.max(...raw) <= 1100 ? 100 : 1;
  const pa = raw.map((x) => x * factor);
  for (const p of pa) if (!(p > 0 && p < 2e5)) throw new IngestError(`axis ${dim}`, `pressure level ${p} Pa is not a plausible pressure`);
  if (new Set(pa).size !== pa.length) throw new IngestError(`axis ${dim}`, 'repeated pressure levels');
  return pa;
}

const TIME_UNITS = /^\s*(\w+)\s+since\s+(.+?)\s*$/i;
const DATE = /^(-?\d{1,4})-(\d{1,2})-(\d{1,2})(?:[T ]+(\d{1,2})(?::(\d{1,2})(?::(\d{1,2}(?:\.\d*)?))?)?)?\s*(Z|UTC|GMT|[+-]\d{1,2}(?::?\d{2})?)?$/i;
const STANDARD_CALENDARS = new Set(['', 'standard', 'gregorian', 'proleptic_gregorian']);

/** A CF time unit "<unit> since <date>" as hours per unit and the epoch in ms since 1970. */
export function parseTimeUnits(where: string, units: string, calendar: string): { hours: number; epochMs: number } {
  const m = TIME_UNITS.exec(units);
  const hours = m ? durationHours(m[1]) : null;
  const d = m ? DATE.exec(m[2]) : null;
  if (!m || hours === null || !d) throw new IngestError(where, `time units "${units}" are not "<hours|days|minutes|seconds> since YYYY-MM-DD[ HH:MM:SS]"`);
  if (!STANDARD_CALENDARS.has(calendar.toLowerCase())) throw new IngestError(where, `calendar "${calendar}" is not supported (only the standard Gregorian calendar)`);
  let epochMs = Date.UTC(+d[1], +d[2] - 1, +d[3], +(d[4] ?? 0), +(d[5] ?? 0), 0) + Math.round(parseFloat(d[6] ?? '0') * 1000);
  const tz = d[7]?.toUpperCase();
  if (tz && /^[+-]/.test(tz)) {
    const [, sign, hh, mm] = /^([+-])(\d{1,2}):?(\d{2})?$/.exec(tz) ?? [];
    epochMs -= (sign === '-' ? -1 : 1) * (+hh * 60 + +(mm ?? 0)) * 60000;
  }
  if (!Number.isFinite(epochMs)) throw new IngestError(where, `time units "${units}" carry an invalid date`);
  return { hours, epochMs };
}

export function isoTime(ms: number): string {
  return new Date(ms).toISOString().replace('.000Z', 'Z');
}

export function timeUnitsOf(v: NcVariable): { hours: number; epochMs: number } {
  return parseTimeUnits(`variable ${v.name}`, unitsOf(v), textAttr(v.attrs, 'calendar') ?? '');
}
