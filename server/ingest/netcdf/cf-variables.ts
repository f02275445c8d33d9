/**
 * Data variables under the CF conventions: which file variable is which canonical quantity
 * (by standard_name, then by common short name), its unit conversion, and unpacking
 * (scale_factor / add_offset, _FillValue / missing_value -> NaN; CF section 8.1 and the
 * NetCDF User's Guide attribute conventions).
 */
import { CANONICAL_VARIABLES, IngestError, STANDARD_GRAVITY, type CanonicalVariable } from '../canonical.ts';
import { numberAttr, textAttr, type NcType, type NcVariable, type NumericArray } from './source.ts';

const BY_STANDARD_NAME: Record<string, CanonicalVariable> = {
  geopotential: 'z',
  geopotential_height: 'z',
  air_temperature: 't',
  relative_humidity: 'r',
  specific_humidity: 'q',
  eastward_wind: 'u',
  x_wind: 'u',
  northward_wind: 'v',
  y_wind: 'v',
  lagrangian_tendency_of_air_pressure: 'w',
  omega: 'w',
  precipitation_amount: 'tp',
  thickness_of_precipitation_amount: 'tp',
  cloud_area_fraction: 'tcc',
};

/** common short names (ecCodes, CMIP, NCEP) for files without standard_name */
const BY_NAME: Record<string, CanonicalVariable> = {
  z: 'z', gh: 'z', zg: 'z', hgt: 'z',
  t: 't', ta: 't', tmp: 't', air: 't',
  r: 'r', rh: 'r', hur: 'r',
  q: 'q', hus: 'q', spfh: 'q',
  u: 'u', ua: 'u', ugrd: 'u',
  v: 'v', va: 'v', vgrd: 'v',
  w: 'w', wap: 'w', omega: 'w', vvel: 'w',
  tp: 'tp', apcp: 'tp',
  tcc: 'tcc', clt: 'tcc', tcdc: 'tcc',
};

const HEIGHT_NAMES = new Set(['gh', 'zg', 'hgt']);

export interface Candidate {
  canonical: CanonicalVariable;
  variable: NcVariable;
  /** 2 when named by standard_name, 1 by short name */
  rank: number;
}

export function identify(v: NcVariable): Candidate | null {
  const sn = textAttr(v.attrs, 'standard_name');
  if (sn && BY_STANDARD_NAME[sn]) return { canonical: BY_STANDARD_NAME[sn], variable: v, rank: 2 };
  const byName = BY_NAME[v.name.toLowerCase()];
  return byName ? { canonical: byName, variable: v, rank: 1 } : null;
}

/** canonical = raw * mul + add, after unpacking */
export interface Conversion {
  mul: number;
  add: number;
}

const norm = (units: string) => units.toLowerCase().replace(/\*\*|\^/g, '').replace(/[\s.]+/g, '');

const UNIT_TABLE: Record<CanonicalVariable, Record<string, Conversion>> = {
  z: {
    'm2s-2': { mul: 1, add: 0 }, 'm2/s2': { mul: 1, add: 0 },
    m: { mul: STANDARD_GRAVITY, add: 0 }, gpm: { mul: STANDARD_GRAVITY, add: 0 }, meters: { mul: STANDARD_GRAVITY, add: 0 },
    dam: { mul: 10 * STANDARD_GRAVITY, add: 0 }, gpdam: { mul: 10 * STANDARD_GRAVITY, add: 0 },
  },
  t: { k: { mul: 1, add: 0 }, kelvin: { mul: 1, add: 0 }, degk: { mul: 1, add: 0 }, degc: { mul: 1, add: 273.15 }, celsius: { mul: 1, add: 273.15 }, c: { mul: 1, add: 273.15 } },
  r: { '%': { mul: 1, add: 0 }, percent: { mul: 1, add: 0 }, '1': { mul: 100, add: 0 }, fraction: { mul: 100, add: 0 } },
  q: { 'kgkg-1': { mul: 1, add: 0 }, 'kg/kg': { mul: 1, add: 0 }, '1': { mul: 1, add: 0 }, 'gkg-1': { mul: 1e-3, add: 0 }, 'g/kg': { mul: 1e-3, add: 0 } },
  u: { 'ms-1': { mul: 1, add: 0 }, 'm/s': { mul: 1, add: 0 } },
  v: { 'ms-1': { mul: 1, add: 0 }, 'm/s': { mul: 1, add: 0 } },
  w: { 'pas-1': { mul: 1, add: 0 }, 'pa/s': { mul: 1, add: 0 }, 'hpas-1': { mul: 100, add: 0 }, 'hpa/s': { mul: 100, add: 0 } },
  tp: { 'kgm-2': { mul: 1, add: 0 }, 'kg/m2': { mul: 1, add: 0 }, mm: { mul: 1, add: 0 }, m: { mul: 1000, add: 0 } },
  tcc: { '%': { mul: 0.01, add: 0 }, percent: { mul: 0.01, add: 0 }, '1': { mul: 1, add: 0 }, fraction: { mul: 1, add: 0 }, '0-1': { mul: 1, add: 0 } },
};

/** How to bring a variable to canonical units; refuses units it does not know. */
export function conversionFor(c: Candidate): Conversion {
  const raw = textAttr(c.variable.attrs, 'units') ?? '';
  const units = norm(raw);
  if (units === '') {
    const sn = textAttr(c.variable.attrs, 'standard_name');
    if (c.canonical === 'z' && (sn === 'geopotential_height' || HEIGHT_NAMES.has(c.variable.name.toLowerCase()))) return { mul: STANDARD_GRAVITY, add: 0 };
    if (c.canonical === 'tp' && sn === 'thickness_of_precipitation_amount') return { mul: 1000, add: 0 };
    return { mul: 1, add: 0 };
  }
  const conv = UNIT_TABLE[c.canonical][units];
  if (!conv) {
    const expected = CANONICAL_VARIABLES[c.canonical].units;
    throw new IngestError(`variable ${c.variable.name}`, `units "${raw}" are not understood for ${CANONICAL_VARIABLES[c.canonical].description} (expected ${expected} or a known equivalent)`);
  }
  return conv;
}

/** NetCDF default fill values (netcdf.h), treated as missing when no _FillValue is set. */
const DEFAULT_FILL: Partial<Record<NcType, number>> = {
  short: -32767,
  int: -2147483647,
  float: 9.969209968386869e36,
  double: 9.969209968386869e36,
  ushort: 65535,
  uint: 4294967295,
};

/** Turns packed stored values into physical values: missing -> NaN, then scale and offset. */
export interface Unpacker {
  missing: number[];
  /** NUG `_Unsigned = "true"`: integers stored signed but meant unsigned; 2^bits to add to negatives, else 0 */
  unsignedWrap: number;
  scale: number;
  offset: number;
  validMin: number;
  validMax: number;
}

export function unpackerFor(v: NcVariable): Unpacker {
  const fill = numberAttr(v.attrs, '_FillValue');
  const missing = [...(fill ?? (DEFAULT_FILL[v.type] !== undefined ? [DEFAULT_FILL[v.type]!] : [])), ...(numberAttr(v.attrs, 'missing_value') ?? [])];
  // float variables compare against the float32 rounding of a double attribute
  const all = v.type === 'float' ? [...missing, ...missing.map(Math.fround)] : missing;
  // valid_range may be given in packed or in physical units (CF 8.1); trust it only unpacked
  const packed = numberAttr(v.attrs, 'scale_factor') !== null || numberAttr(v.attrs, 'add_offset') !== null;
  const range = packed ? null : numberAttr(v.attrs, 'valid_range');
  const bits: Partial<Record<NcType, number>> = { byte: 8, short: 16, int: 32 };
  const unsigned = textAttr(v.attrs, '_Unsigned')?.toLowerCase() === 'true' && bits[v.type] !== undefined;
  return {
    missing: all,
    unsignedWrap: unsigned ? 2 ** bits[v.type]! : 0,
    scale: numberAttr(v.attrs, 'scale_factor')?.[0] ?? 1,
    offset: numberAttr(v.attrs, 'add_offset')?.[0] ?? 0,
    validMin: packed ? -Infinity : (range?.[0] ?? numberAttr(v.attrs, 'valid_min')?.[0] ?? -Infinity),
    validMax: packed ? Infinity : (range?.[1] ?? numberAttr(v.attrs, 'valid_max')?.[0] ?? Infinity),
  };
}

/** Reads element i of a stored slab as a physical value in canonical units (NaN when missing). */
export function makeValueReader(raw: NumericArray, u: Unpacker, conv: Conversion): (i: number) => number {
  const mul = u.scale * conv.mul;
  const add = u.offset * conv.mul + conv.add;
  const isBig = raw instanceof BigInt64Array || raw instanceof BigUint64Array;
  const m0 = u.missing[0];
  const checkOthers = u.missing.length > 1;
  return (i: number) => {
    const x = isBig ? Number(raw[i]) : (raw[i] as number);
    if (x !== x || x === m0 || x < u.validMin || x > u.validMax) return NaN;
    if (checkOthers && u.missing.includes(x)) return NaN;
    return (x < 0 && u.unsignedWrap ? x + u.unsignedWrap : x) * mul + add;
  };
}
