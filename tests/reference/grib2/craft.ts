/**
 * Source of the layouts: WMO Manual on Codes, FM 92 GRIB edition 2, templates 5.2, 5.3, 5.41;
 * PNG chunks and filters: the PNG specification (W3C / ISO 15948).
 *
 * Hand-made GRIB2 pieces for what this ecCodes build does not write (complex packing with
 * spatial differencing of order 1 and 2, missing value management, PNG, several fields per
 * message). Built after the WMO FM 92 GRIB2 template layouts; every crafted message is then
 * decoded by ecCodes (grib_get_data) as the reference, so an encoding slip here shows up as a
 * disagreement rather than as a silently wrong expectation.
 */
import { crc32, deflateSync } from 'node:zlib';

export interface Section {
  num: number;
  bytes: Uint8Array; // the whole section, octet 1 at index 0
}

export function splitMessage(msg: Uint8Array): { discipline: number; sections: Section[] } {
  const sections: Section[] = [];
  let pos = 16;
  const end = msg.length - 4;
  while (pos < end) {
    const len = ((msg[pos] << 24) | (msg[pos + 1] << 16) | (msg[pos + 2] << 8) | msg[pos + 3]) >>> 0;
    sections.push({ num: msg[pos + 4], bytes: msg.slice(pos, pos + len) });
    pos += len;
  }
  return { discipline: msg[6], sections };
}

export function splitFile(file: Uint8Array): Uint8Array[] {
  const out: Uint8Array[] = [];
  let pos = 0;
  while (pos < file.length) {
    const len = Number(Buffer.from(file.subarray(pos + 8, pos + 16)).readBigUInt64BE());
    out.push(file.slice(pos, pos + len));
    pos += len;
  }
  return out;
}

export function buildMessage(discipline: number, sections: Uint8Array[]): Uint8Array {
  const total = 16 + sections.reduce((s, b) => s + b.length, 0) + 4;
  const out = new Uint8Array(total);
  out.set([0x47, 0x52, 0x49, 0x42, 0, 0, discipline, 2]);
  Buffer.from(out.buffer).writeBigUInt64BE(BigInt(total), 8);
  let pos = 16;
  for (const s of sections) {
    out.set(s, pos);
    pos += s.length;
  }
  out.set([0x37, 0x37, 0x37, 0x37], pos);
  return out;
}

export function section(num: number, body: Uint8Array): Uint8Array {
  const out = new Uint8Array(5 + body.length);
  Buffer.from(out.buffer).writeUInt32BE(out.length, 0);
  out[4] = num;
  out.set(body, 5);
  return out;
}

class BitWriter {
  private bytes: number[] = [];
  private acc = 0;
  private n = 0;
  put(value: number, bits: number): void {
    for (let b = bits - 1; b >= 0; b--) {
      this.acc = (this.acc << 1) | (Math.floor(value / 2 ** b) & 1);
      if (++this.n === 8) this.flushByte();
    }
  }
  private flushByte(): void {
    this.bytes.push(this.acc & 0xff);
    this.acc = 0;
    this.n = 0;
  }
  align(): void {
    while (this.n !== 0) this.put(0, 1);
  }
  done(): Uint8Array {
    this.align();
    return Uint8Array.from(this.bytes);
  }
}

const bitsFor = (x: number) => (x <= 0 ? 0 : Math.ceil(Math.log2(x + 1)));

function signMagBytes(v: number, n: number): number[] {
  const mag = Math.abs(v);
  const out: number[] = [];
  for (let k = n - 1; k >= 0; k--) out.push(Math.floor(mag / 256 ** k) & 0xff);
  if (v < 0) out[0] |= 0x80;
  return out;
}

/** Octets 12-20 (reference value, binary and decimal scale) of an ecCodes 5.0 section. */
export function scaleOctets(sec5: Uint8Array): Uint8Array {
  return sec5.slice(11, 19);
}

/** The packed integers of a simple-packed (5.0) field: nbits at octet 20, payload of section 7. */
export function simpleIntegers(sec5: Uint8Array, sec7: Uint8Array): { xs: number[]; nbits: number } {
  const nbits = sec5[19];
  const count = Buffer.from(sec5).readUInt32BE(5);
  const xs: number[] = [];
  for (let i = 0; i < count; i++) {
    let v = 0;
    for (let b = 0; b < nbits; b++) {
      const p = 40 + i * nbits + b; // bit position after the 5-octet header
      v = v * 2 + ((sec7[p >>> 3] >>> (7 - (p & 7))) & 1);
    }
    xs.push(v);
  }
  return { xs, nbits };
}

export interface ComplexOptions {
  order: 0 | 1 | 2;
  template: 2 | 3;
  extraOctets: number;
  /** 0 none, 1 primary, 2 primary and secondary missing values inside the packed data */
  management: 0 | 1 | 2;
  groupLength: number;
}

/**
 * Complex packing of integers `xs` (null = primary missing, undefined = secondary missing),
 * scaled with the R/E/D octets taken from an ecCodes message. Returns sections 5 and 7.
 */
export function encodeComplex(xs: (number | null | undefined)[], scale: Uint8Array, o: ComplexOptions): { sec5: Uint8Array; sec7: Uint8Array } {
  const present = xs.map((x) => typeof x === 'number');
  let vals = xs.map((x) => (typeof x === 'number' ? x : 0));
  let ival1 = 0;
  let ival2 = 0;
  let minsd = 0;
  if (o.order > 0) {
    const idx = vals.map((_, i) => i).filter((i) => present[i]);
    const orig = idx.map((i) => vals[i]);
    const d = orig.map((v, k) => (k < o.order ? 0 : o.order === 1 ? v - orig[k - 1] : v - 2 * orig[k - 1] + orig[k - 2]));
    ival1 = orig[0];
    ival2 = orig[1];
    minsd = Math.min(...d.slice(o.order));
    vals = [...vals];
    idx.forEach((i, k) => (vals[i] = k < o.order ? 0 : d[k] - minsd));
  }
  const spare = o.management; // codes 2^w-1 (and 2^w-2) are reserved when missing values may appear
  const groups: { start: number; len: number; ref: number; width: number }[] = [];
  for (let s = 0; s < xs.length; s += o.groupLength) {
    const len = Math.min(o.groupLength, xs.length - s);
    const got = [];
    for (let i = s; i < s + len; i++) if (present[i]) got.push(vals[i]);
    if (got.length === 0) {
      groups.push({ start: s, len, ref: -1, width: 0 });
      continue;
    }
    const ref = Math.min(...got);
    const range = Math.max(...got) - ref;
    groups.push({ start: s, len, ref, width: bitsFor(range + spare) });
  }
  const refBits = Math.max(1, bitsFor(Math.max(...groups.map((g) => g.ref)) + spare));
  for (const g of groups) if (g.ref === -1) g.ref = 2 ** refBits - 1; // whole group missing
  const wRef = Math.min(...groups.map((g) => g.width));
  const wBits = bitsFor(Math.max(...groups.map((g) => g.width)) - wRef);
  const lRef = Math.min(...groups.slice(0, -1).map((g) => g.len), o.groupLength);
  const lBits = bitsFor(Math.max(...groups.map((g) => g.len)) - lRef);

  const w = new BitWriter();
  for (const g of groups) w.put(g.ref, refBits);
  w.align();
  for (const g of groups) w.put(g.width - wRef, wBits);
  w.align();
  for (const g of groups) w.put(Math.max(0, g.len - lRef), lBits);
  w.align();
  for (const g of groups) {
    if (g.width === 0) continue;
    for (let i = g.start; i < g.start + g.len; i++) {
      const x = xs[i];
      const code = x === null ? 2 ** g.width - 1 : x === undefined ? 2 ** g.width - 2 : vals[i] - g.ref;
      w.put(code, g.width);
    }
  }
  const packed = w.done();
  const extras = o.order > 0 ? [...signMagBytes(ival1, o.extraOctets), ...(o.order === 2 ? signMagBytes(ival2, o.extraOctets) : []), ...signMagBytes(minsd, o.extraOctets)] : [];
  const sec7 = section(7, Uint8Array.from([...extras, ...packed]));

  const body = new Uint8Array(o.template === 3 ? 44 : 42);
  const b = Buffer.from(body.buffer);
  b.writeUInt32BE(xs.length, 0); // octets 6-9
  b.writeUInt16BE(o.template, 4); // 10-11
  body.set(scale, 6); // 12-19
  body[14] = refBits; // 20
  body[15] = 0; // 21 floating point
  body[16] = 1; // 22 general group splitting
  body[17] = o.management; // 23
  b.writeUInt32BE(0xffffffff, 18); // 24-27 primary missing substitute
  b.writeUInt32BE(0xfffffffe, 22); // 28-31 secondary
  b.writeUInt32BE(groups.length, 26); // 32-35
  body[30] = wRef; // 36
  body[31] = wBits; // 37
  b.writeUInt32BE(lRef, 32); // 38-41
  body[36] = 1; // 42 length increment
  b.writeUInt32BE(groups[groups.length - 1].len, 37); // 43-46
  body[41] = lBits; // 47
  if (o.template === 3) {
    body[42] = o.order; // 48
    body[43] = o.order > 0 ? o.extraOctets : 0; // 49
  }
  return { sec5: section(5, body), sec7 };
}

function pngChunk(type: string, data: Uint8Array): Uint8Array {
  const out = Buffer.alloc(12 + data.length);
  out.writeUInt32BE(data.length, 0);
  out.write(type, 4, 'latin1');
  Buffer.from(data).copy(out, 8);
  out.writeUInt32BE(crc32(out.subarray(4, 8 + data.length)) >>> 0, 8 + data.length);
  return out;
}

/**
 * PNG (template 5.41) of integers xs on width x height pixels, `bits` per pixel: grey 8 or 16,
 * RGB 24, RGBA 32 (as ecCodes lays them out). Rows cycle through filter types 0-4 so the
 * decoder's unfiltering is exercised.
 */
export function encodePng(xs: number[], width: number, height: number, bits: 8 | 16 | 24 | 32, scale: Uint8Array): { sec5: Uint8Array; sec7: Uint8Array } {
  const bpp = bits / 8;
  const colour = bits === 24 ? 2 : bits === 32 ? 6 : 0;
  const depth = bits <= 16 ? bits : 8;
  const rowBytes = width * bpp;
  const raw = new Uint8Array(height * rowBytes);
  xs.forEach((x, i) => {
    for (let k = 0; k < bpp; k++) raw[i * bpp + k] = Math.floor(x / 256 ** (bpp - 1 - k)) & 0xff;
  });
  const filtered = new Uint8Array(height * (rowBytes + 1));
  for (let r = 0; r < height; r++) {
    const f = r % 5;
    filtered[r * (rowBytes + 1)] = f;
    for (let i = 0; i < rowBytes; i++) {
      const x = raw[r * rowBytes + i];
      const a = i >= bpp ? raw[r * rowBytes + i - bpp] : 0;
      const b = r > 0 ? raw[(r - 1) * rowBytes + i] : 0;
      const c = r > 0 && i >= bpp ? raw[(r - 1) * rowBytes + i - bpp] : 0;
      const p = a + b - c;
      const pred = [0, a, b, (a + b) >>> 1, Math.abs(p - a) <= Math.abs(p - b) && Math.abs(p - a) <= Math.abs(p - c) ? a : Math.abs(p - b) <= Math.abs(p - c) ? b : c][f];
      filtered[r * (rowBytes + 1) + 1 + i] = (x - pred) & 0xff;
    }
  }
  const ihdr = Buffer.alloc(13);
  ihdr.writeUInt32BE(width, 0);
  ihdr.writeUInt32BE(height, 4);
  ihdr[8] = depth;
  ihdr[9] = colour;
  const png = Buffer.concat([
    Buffer.from([0x89, 0x50, 0x4e, 0x47, 0x0d, 0x0a, 0x1a, 0x0a]),
    pngChunk('IHDR', ihdr),
    pngChunk('IDAT', deflateSync(filtered)),
    pngChunk('IEND', new Uint8Array(0)),
  ]);
  const body = new Uint8Array(16);
  Buffer.from(body.buffer).writeUInt32BE(xs.length, 0);
  Buffer.from(body.buffer).writeUInt16BE(41, 4);
  body.set(scale, 6);
  body[14] = bits;
  return { sec5: section(5, body), sec7: section(7, png) };
}
