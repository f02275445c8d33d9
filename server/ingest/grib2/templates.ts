/**
 * Parsers for the GRIB2 section templates Liftwise reads (WMO FM 92 GRIB edition 2,
 * Code tables 3.1, 4.0, 5.0). Each takes the whole section as bytes, octet 1 at index 0,
 * and refuses what it does not know with an IngestError naming the template.
 * Octet numbers in comments are the WMO ones (1-based).
 */
import { IngestError } from '../canonical.ts';
import { allOnes, ieee32, signMag, u16, u32, u8 } from './bits.ts';

/** A 0.05-degree global grid has about 26 million points; more than this is a corrupt header. */
export const MAX_POINTS = 30_000_000;

export interface GridDef {
  template: number;
  ni: number;
  nj: number;
  /** degrees */
  la1: number;
  lo1: number;
  la2: number;
  lo2: number;
  /** declared increments in degrees, NaN when the file marks them missing */
  di: number;
  dj: number;
  scanMode: number;
}

export interface ProductDef {
  template: number;
  category: number;
  number: number;
  /** Code table 4.4 unit of `forecastTime` */
  timeUnit: number;
  forecastTime: number;
  level1Type: number;
  /** value of the first fixed surface in its SI unit (Pa for type 100), NaN when missing */
  level1Value: number;
  /** ensemble member (perturbation number) from 4.1 / 4.11, else null */
  member: number | null;
  /** statistical processing from 4.8 / 4.11, else null */
  stat: { process: number; rangeUnit: number; rangeLength: number } | null;
}

export interface PackingDef {
  template: number;
  /** number of packed values (the non-missing points when a bitmap is present) */
  count: number;
  reference: number;
  binaryScale: number;
  decimalScale: number;
  nbits: number;
  // complex packing (5.2 / 5.3)
  missingManagement: number;
  groups: number;
  groupWidthRef: number;
  groupWidthBits: number;
  groupLengthRef: number;
  groupLengthIncrement: number;
  lastGroupLength: number;
  groupLengthBits: number;
  spatialOrder: number;
  extraOctets: number;
  /** 5.4: 1 = IEEE 32-bit, 2 = IEEE 64-bit */
  precision: number;
}

function need(sec: Uint8Array, octets: number, where: string): void {
  if (sec.length < octets) {
    throw new IngestError(where, `section is ${sec.length} octets, the template needs at least ${octets}`);
  }
}

/** Grid definition, section 3. Only template 3.0 (regular latitude/longitude) is accepted. */
export function parseGrid(sec: Uint8Array): GridDef {
  need(sec, 14, 'section 3');
  const template = u16(sec, 12);
  const where = `grid template 3.${template}`;
  if (template === 1) throw new IngestError(where, 'rotated latitude/longitude grids are not supported; interpolate to a regular lat/lon grid first');
  if (template === 40 || template === 41) throw new IngestError(where, 'Gaussian grids are not supported; interpolate to a regular lat/lon grid first');
  if (template !== 0) throw new IngestError(where, 'only grid template 3.0 (regular latitude/longitude) is supported');
  if (sec[5] !== 0) throw new IngestError(where, 'grids defined by a predetermined table (octet 6 != 0) are not supported');
  if (sec[10] !== 0) throw new IngestError(where, 'quasi-regular grids (a list of points per row) are not supported');
  need(sec, 72, where);
  const ni = u32(sec, 30);
  const nj = u32(sec, 34);
  const npts = u32(sec, 6);
  if (ni === 0xffffffff || nj === 0xffffffff) throw new IngestError(where, 'Ni or Nj is missing (quasi-regular grid), not supported');
  if (ni < 1 || nj < 1 || ni * nj !== npts) {
    throw new IngestError(where, `Ni x Nj = ${ni} x ${nj} does not match the ${npts} data points declared`);
  }
  if (npts > MAX_POINTS) throw new IngestError(where, `absurd grid size ${npts} points (at most ${MAX_POINTS})`);
  const basic = u32(sec, 38);
  const sub = u32(sec, 42);
  const unit = basic === 0 || basic === 0xffffffff || sub === 0 || sub === 0xffffffff ? 1e-6 : basic / sub;
  const angle = (o: number, signed: boolean) => (signed ? signMag(sec, o, 4) : u32(sec, o)) * unit;
  const scanMode = sec[71];
  if (scanMode & 0x0f) throw new IngestError(where, `scanning mode 0x${scanMode.toString(16)} (row offsets, octet 72 bits 5-8) is not supported`);
  return {
    template,
    ni,
    nj,
    la1: angle(46, true),
    lo1: angle(50, true),
    la2: angle(55, true),
    lo2: angle(59, true),
    di: allOnes(sec, 63, 4) ? NaN : u32(sec, 63) * unit,
    dj: allOnes(sec, 67, 4) ? NaN : u32(sec, 67) * unit,
    scanMode,
  };
}

/** Product definition, section 4: templates 4.0, 4.1, 4.8, 4.11. */
export function parseProduct(sec: Uint8Array): ProductDef {
  need(sec, 9, 'section 4');
  const template = u16(sec, 7);
  const where = `product template 4.${template}`;
  if (template !== 0 && template !== 1 && template !== 8 && template !== 11) {
    throw new IngestError(where, 'only product templates 4.0, 4.1, 4.8 and 4.11 are supported');
  }
  need(sec, 34, where);
  const scale = signMag(sec, 23, 1);
  const level1Value = allOnes(sec, 24, 4) || sec[23] === 0xff ? NaN : u32(sec, 24) * 10 ** -scale;
  const p: ProductDef = {
    template,
    category: u8(sec, 9),
    number: u8(sec, 10),
    timeUnit: u8(sec, 17),
    forecastTime: signMag(sec, 18, 4),
    level1Type: u8(sec, 22),
    level1Value,
    member: null,
    stat: null,
  };
  if (template === 1 || template === 11) {
    need(sec, 37, where);
    p.member = u8(sec, 35);
  }
  if (template === 8 || template === 11) {
    const base = template === 8 ? 34 : 37; // octets before "year of end of overall time interval"
    need(sec, base + 24, where);
    const n = u8(sec, base + 7);
    if (n < 1) throw new IngestError(where, 'statistical processing with zero time ranges');
    // the first time-range specification holds the interval the statistic covers
    p.stat = {
      process: u8(sec, base + 12),
      rangeUnit: u8(sec, base + 14),
      rangeLength: u32(sec, base + 15),
    };
  }
  return p;
}

/** Data representation, section 5: templates 5.0, 5.2, 5.3, 5.4, 5.40, 5.41 (5.42 refused). */
export function parsePacking(sec: Uint8Array): PackingDef {
  need(sec, 11, 'section 5');
  const template = u16(sec, 9);
  const where = `data representation template 5.${template}`;
  if (template === 42) {
    throw new IngestError(where, 'CCSDS (AEC) packing is not supported; repack the file with ecCodes: `grib_set -r -s packingType=grid_simple in.grib2 out.grib2`');
  }
  if (![0, 2, 3, 4, 40, 41].includes(template)) {
    throw new IngestError(where, 'only templates 5.0, 5.2, 5.3, 5.4, 5.40 and 5.41 are supported');
  }
  const d: PackingDef = {
    template,
    count: u32(sec, 5),
    reference: 0,
    binaryScale: 0,
    decimalScale: 0,
    nbits: 0,
    missingManagement: 0,
    groups: 0,
    groupWidthRef: 0,
    groupWidthBits: 0,
    groupLengthRef: 0,
    groupLengthIncrement: 0,
    lastGroupLength: 0,
    groupLengthBits: 0,
    spatialOrder: 0,
    extraOctets: 0,
    precision: 0,
  };
  if (d.count > MAX_POINTS) throw new IngestError(where, `absurd number of values ${d.count} (at most ${MAX_POINTS})`);
  if (template === 4) {
    need(sec, 12, where);
    d.precision = sec[11];
    if (d.precision !== 1 && d.precision !== 2) throw new IngestError(where, `IEEE precision code ${d.precision} is not supported (1 = 32-bit, 2 = 64-bit)`);
    return d;
  }
  need(sec, 21, where);
  d.reference = ieee32(sec, 11);
  d.binaryScale = signMag(sec, 15, 2);
  d.decimalScale = signMag(sec, 17, 2);
  d.nbits = sec[19];
  if (!Number.isFinite(d.reference)) throw new IngestError(where, 'reference value is not a finite number');
  if (d.nbits > 32) throw new IngestError(where, `${d.nbits} bits per value is not supported (at most 32)`);
  if (template === 2 || template === 3) {
    need(sec, template === 3 ? 49 : 47, where);
    d.missingManagement = sec[22];
    if (d.missingManagement > 2) throw new IngestError(where, `missing value management ${d.missingManagement} is not defined`);
    d.groups = u32(sec, 31);
    d.groupWidthRef = sec[35];
    d.groupWidthBits = sec[36];
    d.groupLengthRef = u32(sec, 37);
    d.groupLengthIncrement = sec[41];
    d.lastGroupLength = u32(sec, 42);
    d.groupLengthBits = sec[46];
    if (d.groupWidthBits > 32 || d.groupLengthBits > 32) throw new IngestError(where, 'group width or length bit counts above 32');
    if (sec[21] > 1) throw new IngestError(where, `group splitting method ${sec[21]} is not defined (0 row by row, 1 general)`);
    if (template === 3) {
      d.spatialOrder = sec[47];
      d.extraOctets = sec[48];
      if (d.spatialOrder > 2) throw new IngestError(where, `spatial differencing order ${d.spatialOrder} is not supported (0, 1 or 2)`);
      if (d.spatialOrder > 0 && (d.extraOctets < 1 || d.extraOctets > 4)) {
        throw new IngestError(where, `${d.extraOctets} octets per extra descriptor (must be 1 to 4)`);
      }
    }
  }
  return d;
}
