/**
 * A small GRIB2 encoder (WMO FM 92 GRIB edition 2) for the synthetic demo runs.
 *
 * Writes one message per field: sections 0, 1, 3 (grid template 3.0, regular lat/lon),
 * 4 (product templates 4.0, 4.1, 4.8, 4.11), 5 and 7 (data representation 5.0 simple packing,
 * 5.2 complex packing with fixed-size groups), 6 (no bitmap) and 8 ("7777").
 *
 * Packing follows the WMO relation Y * 10^D = R + X * 2^E (Y the value, R the reference
 * value as IEEE 32-bit float, X the packed integer, E and D the binary and decimal scale
 * factors, both written sign-and-magnitude).
 */

export interface Grib2Time {
  year: number;
  month: number;
  day: number;
  hour: number;
  minute: number;
  second: number;
}

/** Regular latitude/longitude grid (template 3.0); angles in degrees. */
export interface Grib2Grid {
  ni: number;
  nj: number;
  lat1: number;
  lon1: number;
  lat2: number;
  lon2: number;
  /** increments, positive degrees */
  di: number;
  dj: number;
  /** flag table 3.4; 0x00 = west to east, north to south, rows consecutive */
  scanningMode?: number;
}

export interface Grib2Product {
  discipline: number;
  category: number;
  number: number;
  /** code table 4.5: 100 isobaric surface (Pa), 1 ground or water surface */
  levelType: number;
  /** Pa for levelType 100; 0 for the surface */
  levelValue: number;
  /** type of the second fixed surface; 8 (nominal top of the atmosphere) makes a surface
   * field a whole-column quantity such as total cloud cover. Default: none (255). */
  secondLevelType?: number;
  /** forecast step in hours (the end of the interval for accumulations) */
  stepHours: number;
  /** accumulation (statistical process 1) from `fromHours` to stepHours: templates 4.8 / 4.11 */
  accumulatedFromHours?: number;
  /** ensemble member: templates 4.1 / 4.11 */
  ensemble?: { member: number; total: number };
}

export interface Grib2Packing {
  type: 'simple' | 'complex';
  /** D: values are kept to 10^-D */
  decimalScale: number;
  /** bits per packed value; E is chosen so the field's range fits. Default 16. */
  bitsPerValue?: number;
  /** complex packing: values per group (the last group may be shorter). Default 32. */
  groupSize?: number;
}

export interface Grib2Message {
  referenceTime: Grib2Time;
  /** originating centre, code table C-11 (255 = missing) */
  centre?: number;
  subcentre?: number;
  grid: Grib2Grid;
  product: Grib2Product;
  packing: Grib2Packing;
}

class ByteWriter {
  private buf = new Uint8Array(1024);
  length = 0;
  private ensure(n: number): void {
    if (this.length + n <= this.buf.length) return;
    let size = this.buf.length * 2;
    while (size < this.length + n) size *= 2;
    const next = new Uint8Array(size);
    next.set(this.buf.subarray(0, this.length));
    this.buf = next;
  }
  uint(value: number, bytes: number): void {
    if (!Number.isInteger(value) || value < 0 || value >= 2 ** (8 * bytes)) {
      throw new Error(`GRIB2 encoder: ${value} does not fit in ${bytes} unsigned octet(s)`);
    }
    this.ensure(bytes);
    for (let b = bytes - 1; b >= 0; b--) this.buf[this.length++] = Math.floor(value / 2 ** (8 * b)) & 0xff;
  }
  /** Sign-and-magnitude integer (WMO convention for signed GRIB2 quantities). */
  signed(value: number, bytes: number): void {
    const max = 2 ** (8 * bytes - 1);
    if (!Number.isInteger(value) || Math.abs(value) >= max) {
      throw new Error(`GRIB2 encoder: ${value} does not fit in ${bytes} signed octet(s)`);
    }
    this.uint(value < 0 ? max + -value : value, bytes);
  }
  float32(value: number): void {
    const dv = new DataView(new ArrayBuffer(4));
    dv.setFloat32(0, value, false);
    this.bytes(new Uint8Array(dv.buffer));
  }
  bytes(data: Uint8Array): void {
    this.ensure(data.length);
    this.buf.set(data, this.length);
    this.length += data.length;
  }
  ascii(text: string): void {
    for (const ch of text) this.uint(ch.charCodeAt(0), 1);
  }
  /** Overwrites a 4-octet length previously written at `at`. */
  patchUint32(at: number, value: number): void {
    this.buf[at] = (value >>> 24) & 0xff;
    this.buf[at + 1] = (value >>> 16) & 0xff;
    this.buf[at + 2] = (value >>> 8) & 0xff;
    this.buf[at + 3] = value & 0xff;
  }
  result(): Uint8Array {
    return this.buf.slice(0, this.length);
  }
}

/** Most-significant-bit-first bit packer, padded with zeros to a whole octet. */
export class BitWriter {
  private bytes: Uint8Array;
  private pos = 0;
  /** pending bits not yet flushed to a whole octet (fewer than 8) */
  private acc = 0;
  private accBits = 0;
  constructor(capacityBits: number) {
    this.bytes = new Uint8Array(Math.ceil(capacityBits / 8) + 8);
  }
  write(value: number, bits: number): void {
    if (bits > 24) {
      // keep the accumulator inside 31 bits
      this.write(Math.floor(value / 2 ** 16), bits - 16);
      this.write(value % 2 ** 16, 16);
      return;
    }
    this.acc = (this.acc << bits) | value;
    this.accBits += bits;
    while (this.accBits >= 8) {
      this.accBits -= 8;
      this.bytes[this.pos++] = (this.acc >>> this.accBits) & 0xff;
    }
    this.acc &= (1 << this.accBits) - 1;
  }
  /** Moves to the next octet boundary (section 7 of template 5.2 pads each block). */
  align(): void {
    if (this.accBits > 0) this.write(0, 8 - this.accBits);
  }
  result(): Uint8Array {
    this.align();
    return this.bytes.slice(0, this.pos);
  }
}

/** Number of bits needed to hold 0..maxValue. */
export function bitsFor(maxValue: number): number {
  let bits = 0;
  while (2 ** bits - 1 < maxValue) bits++;
  return bits;
}

function section(w: ByteWriter, number: number, body: (w: ByteWriter) => void): void {
  const start = w.length;
  w.uint(0, 4);
  w.uint(number, 1);
  body(w);
  w.patchUint32(start, w.length - start);
}

function writeTime(w: ByteWriter, t: Grib2Time): void {
  w.uint(t.year, 2);
  for (const v of [t.month, t.day, t.hour, t.minute, t.second]) w.uint(v, 1);
}

function addHours(t: Grib2Time, hours: number): Grib2Time {
  const d = new Date(Date.UTC(t.year, t.month - 1, t.day, t.hour, t.minute, t.second) + hours * 3_600_000);
  return {
    year: d.getUTCFullYear(), month: d.getUTCMonth() + 1, day: d.getUTCDate(),
    hour: d.getUTCHours(), minute: d.getUTCMinutes(), second: d.getUTCSeconds(),
  };
}

export function timeFromIso(iso: string): Grib2Time {
  const ms = Date.parse(iso);
  if (Number.isNaN(ms)) throw new Error(`GRIB2 encoder: invalid reference time "${iso}"`);
  return addHours({ year: 1970, month: 1, day: 1, hour: 0, minute: 0, second: 0 }, ms / 3_600_000);
}

const MICRO = 1e6;
/** Longitudes are written in 0..360 as most producers do. */
function microdegreesLon(lon: number): number {
  return Math.round((((lon % 360) + 360) % 360) * MICRO);
}

function writeGrid(w: ByteWriter, g: Grib2Grid): void {
  section(w, 3, (s) => {
    s.uint(0, 1); // source of grid definition: template
    s.uint(g.ni * g.nj, 4);
    s.uint(0, 1); // no optional list of points
    s.uint(0, 1);
    s.uint(0, 2); // template 3.0
    s.uint(6, 1); // shape of the earth: sphere of radius 6 371 229 m
    s.uint(0xff, 1); s.uint(0xffffffff, 4); // radius scale factor and value: missing
    s.uint(0xff, 1); s.uint(0xffffffff, 4); // major axis: missing
    s.uint(0xff, 1); s.uint(0xffffffff, 4); // minor axis: missing
    s.uint(g.ni, 4);
    s.uint(g.nj, 4);
    s.uint(0, 4); // basic angle 0 ...
    s.uint(0xffffffff, 4); // ... and subdivisions missing: units of 10^-6 degree
    s.signed(Math.round(g.lat1 * MICRO), 4);
    s.uint(microdegreesLon(g.lon1), 4);
    s.uint(0x30, 1); // resolution flags: i and j increments given
    s.signed(Math.round(g.lat2 * MICRO), 4);
    s.uint(microdegreesLon(g.lon2), 4);
    s.uint(Math.round(g.di * MICRO), 4);
    s.uint(Math.round(g.dj * MICRO), 4);
    s.uint(g.scanningMode ?? 0, 1);
  });
}

function productTemplate(p: Grib2Product): number {
  const acc = p.accumulatedFromHours !== undefined;
  if (p.ensemble) return acc ? 11 : 1;
  return acc ? 8 : 0;
}

function writeProduct(w: ByteWriter, p: Grib2Product, ref: Grib2Time): void {
  const template = productTemplate(p);
  const acc = p.accumulatedFromHours;
  section(w, 4, (s) => {
    s.uint(0, 2); // no coordinate values after the template
    s.uint(template, 2);
    s.uint(p.category, 1);
    s.uint(p.number, 1);
    s.uint(p.ensemble ? 4 : 2, 1); // generating process: ensemble forecast / forecast
    s.uint(0, 1); // background process
    s.uint(0xff, 1); // forecast process identifier: missing (the demo model is named elsewhere)
    s.uint(0, 2); // observation cut-off hours
    s.uint(0, 1); // and minutes
    s.uint(1, 1); // time unit: hour
    s.uint(acc !== undefined ? acc : p.stepHours, 4);
    s.uint(p.levelType, 1);
    if (p.levelType === 1) {
      s.uint(0xff, 1); s.uint(0xffffffff, 4); // surface: no value
    } else {
      s.signed(0, 1); s.uint(Math.round(p.levelValue), 4);
    }
    s.uint(p.secondLevelType ?? 0xff, 1); s.uint(0xff, 1); s.uint(0xffffffff, 4); // second surface, no value
    if (p.ensemble) {
      s.uint(p.ensemble.member === 0 ? 0 : 3, 1); // unperturbed control / positively perturbed
      s.uint(p.ensemble.member, 1);
      s.uint(p.ensemble.total, 1);
    }
    if (acc !== undefined) {
      writeTime(s, addHours(ref, p.stepHours)); // end of the overall interval
      s.uint(1, 1); // one time range
      s.uint(0, 4); // no missing values in the process
      s.uint(1, 1); // statistical process: accumulation
      s.uint(2, 1); // successive times, same start, forecast time incremented
      s.uint(1, 1); // unit: hour
      s.uint(p.stepHours - acc, 4);
      s.uint(0xff, 1); // increment unit: missing
      s.uint(0, 4); // increment 0: continuous
    }
  });
}

/** The largest float32 not above x (R is stored as IEEE 32-bit and must not exceed the minimum). */
export function float32AtMost(x: number): number {
  const f = Math.fround(x);
  if (f <= x) return f;
  const dv = new DataView(new ArrayBuffer(4));
  dv.setFloat32(0, f);
  const bits = dv.getUint32(0);
  // one unit in the last place towards minus infinity
  if (f > 0) dv.setUint32(0, bits - 1);
  else if (f < 0) dv.setUint32(0, bits + 1);
  else dv.setUint32(0, 0x80000001);
  return dv.getFloat32(0);
}

interface Scaled {
  reference: number;
  binaryScale: number;
  decimalScale: number;
  packed: Uint32Array;
  maxPacked: number;
}

/** Chooses R and E for decimal scale D and the bit budget, and returns the packed integers X. */
export function scaleValues(values: ArrayLike<number>, decimalScale: number, bitsPerValue: number): Scaled {
  let min = Infinity;
  let max = -Infinity;
  const d = 10 ** decimalScale;
  for (let i = 0; i < values.length; i++) {
    const v = values[i];
    if (!Number.isFinite(v)) throw new Error(`GRIB2 encoder: value ${i} is not finite (${v}); bitmaps are not supported`);
    min = Math.min(min, v * d);
    max = Math.max(max, v * d);
  }
  // R must not exceed the minimum once rounded to float32, else X would go negative.
  const reference = float32AtMost(min);
  const range = max - reference;
  const maxX = 2 ** bitsPerValue - 1;
  let binaryScale = range > 0 ? Math.ceil(Math.log2(range / maxX)) : 0;
  while (range / 2 ** binaryScale > maxX) binaryScale++;
  const packed = new Uint32Array(values.length);
  let maxPacked = 0;
  const inv = 2 ** -binaryScale;
  for (let i = 0; i < values.length; i++) {
    const x = Math.min(maxX, Math.max(0, Math.round((values[i] * d - reference) * inv)));
    packed[i] = x;
    if (x > maxPacked) maxPacked = x;
  }
  return { reference, binaryScale, decimalScale, packed, maxPacked };
}

function writeSimple(w: ByteWriter, s: Scaled, nbits: number): void {
  const bits = s.maxPacked === 0 ? 0 : nbits;
  section(w, 5, (x) => {
    x.uint(s.packed.length, 4);
    x.uint(0, 2); // template 5.0
    x.float32(s.reference);
    x.signed(s.binaryScale, 2);
    x.signed(s.decimalScale, 2);
    x.uint(bits, 1);
    x.uint(0, 1); // original values: floating point
  });
  section(w, 6, (x) => x.uint(0xff, 1)); // no bitmap
  const bw = new BitWriter(s.packed.length * bits);
  for (let i = 0; i < s.packed.length && bits > 0; i++) bw.write(s.packed[i], bits);
  section(w, 7, (x) => x.bytes(bw.result()));
}

/**
 * Complex packing (template 5.2, general group splitting) with fixed-size groups: each group
 * stores its minimum as the group reference and its values relative to it with just enough bits.
 */
function writeComplex(w: ByteWriter, s: Scaled, groupSize: number): void {
  const n = s.packed.length;
  const ng = Math.ceil(n / groupSize);
  const refs = new Uint32Array(ng);
  const widths = new Uint8Array(ng);
  for (let g = 0; g < ng; g++) {
    let lo = Infinity;
    let hi = -Infinity;
    for (let i = g * groupSize; i < Math.min(n, (g + 1) * groupSize); i++) {
      lo = Math.min(lo, s.packed[i]);
      hi = Math.max(hi, s.packed[i]);
    }
    refs[g] = lo;
    widths[g] = bitsFor(hi - lo);
  }
  const refBits = bitsFor(Math.max(...refs));
  const widthRef = Math.min(...widths);
  const widthBits = bitsFor(Math.max(...widths) - widthRef);
  const lastLength = n - (ng - 1) * groupSize;
  section(w, 5, (x) => {
    x.uint(n, 4);
    x.uint(2, 2); // template 5.2
    x.float32(s.reference);
    x.signed(s.binaryScale, 2);
    x.signed(s.decimalScale, 2);
    x.uint(refBits, 1); // bits for each group reference
    x.uint(0, 1); // original values: floating point
    x.uint(1, 1); // group splitting method: general
    x.uint(0, 1); // no explicit missing values
    x.uint(0xffffffff, 4); x.uint(0xffffffff, 4); // missing value substitutes: unused
    x.uint(ng, 4);
    x.uint(widthRef, 1);
    x.uint(widthBits, 1);
    x.uint(groupSize, 4); // reference for group lengths
    x.uint(1, 1); // length increment
    x.uint(lastLength, 4); // true length of the last group
    x.uint(0, 1); // 0 bits for scaled lengths: every group but the last has the reference length
  });
  section(w, 6, (x) => x.uint(0xff, 1));
  let dataBits = 0;
  for (let g = 0; g < ng; g++) dataBits += widths[g] * (g === ng - 1 ? lastLength : groupSize);
  const bw = new BitWriter(ng * (refBits + widthBits) + dataBits + 16);
  for (let g = 0; g < ng; g++) bw.write(refs[g], refBits);
  bw.align();
  for (let g = 0; g < ng; g++) bw.write(widths[g] - widthRef, widthBits);
  bw.align();
  // Scaled group lengths take 0 bits each: nothing to write.
  for (let g = 0; g < ng; g++) {
    if (widths[g] === 0) continue;
    for (let i = g * groupSize; i < Math.min(n, (g + 1) * groupSize); i++) bw.write(s.packed[i] - refs[g], widths[g]);
  }
  section(w, 7, (x) => x.bytes(bw.result()));
}

/** Encodes one field (values in the grid's scanning order) as a complete GRIB2 message. */
export function encodeGrib2Message(msg: Grib2Message, values: ArrayLike<number>): Uint8Array {
  const { grid, product, packing } = msg;
  if (values.length !== grid.ni * grid.nj) {
    throw new Error(`GRIB2 encoder: ${values.length} values for a ${grid.ni} x ${grid.nj} grid`);
  }
  const nbits = packing.bitsPerValue ?? 16;
  if (nbits < 1 || nbits > 31) throw new Error(`GRIB2 encoder: bitsPerValue ${nbits} outside 1..31`);
  const w = new ByteWriter();
  w.ascii('GRIB');
  w.uint(0, 2);
  w.uint(product.discipline, 1);
  w.uint(2, 1); // edition
  w.uint(0, 4); // high half of the 8-octet total length (messages here stay far below 4 GB)
  w.uint(0, 4); // low half, patched below
  section(w, 1, (s) => {
    s.uint(msg.centre ?? 255, 2);
    s.uint(msg.subcentre ?? 0, 2);
    s.uint(4, 1); // master tables version
    s.uint(0, 1); // no local tables
    s.uint(1, 1); // reference time is the start of the forecast
    writeTime(s, msg.referenceTime);
    s.uint(2, 1); // production status: research products
    s.uint(product.ensemble ? 4 : 1, 1); // perturbed forecast / forecast products
  });
  writeGrid(w, grid);
  writeProduct(w, product, msg.referenceTime);
  const scaled = scaleValues(values, packing.decimalScale, nbits);
  if (packing.type === 'simple') writeSimple(w, scaled, nbits);
  else writeComplex(w, scaled, packing.groupSize ?? 32);
  w.ascii('7777');
  w.patchUint32(12, w.length);
  return w.result();
}
