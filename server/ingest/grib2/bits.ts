/**
 * Big-endian octet and bit readers for GRIB2 (WMO Manual on Codes, FM 92 GRIB edition 2).
 *
 * Every buffer handed to unpackBits carries at least 8 zero octets of padding past the
 * data (see padded()), so the inner loops read 4 or 5 octets without bounds checks.
 */

export const PAD = 8;

/** Copies `src` into a fresh buffer with PAD zero octets at the end. */
export function padded(src: Uint8Array): Uint8Array {
  const out = new Uint8Array(src.length + PAD);
  out.set(src);
  return out;
}

export function u8(b: Uint8Array, o: number): number {
  return b[o];
}

export function u16(b: Uint8Array, o: number): number {
  return (b[o] << 8) | b[o + 1];
}

export function u32(b: Uint8Array, o: number): number {
  return ((b[o] << 24) | (b[o + 1] << 16) | (b[o + 2] << 8) | b[o + 3]) >>> 0;
}

export function u64(b: Uint8Array, o: number): number {
  return u32(b, o) * 4294967296 + u32(b, o + 4);
}

/**
 * GRIB2 signed integers are sign-and-magnitude (the top bit is the sign), not two's complement.
 * `n` octets, 1 to 4.
 */
export function signMag(b: Uint8Array, o: number, n: number): number {
  let v = b[o] & 0x7f;
  for (let k = 1; k < n; k++) v = v * 256 + b[o + k];
  return b[o] & 0x80 ? -v : v;
}

export function unsignedN(b: Uint8Array, o: number, n: number): number {
  let v = 0;
  for (let k = 0; k < n; k++) v = v * 256 + b[o + k];
  return v;
}

/** True when all `n` octets are 0xff (GRIB2's "missing" for a field of the section). */
export function allOnes(b: Uint8Array, o: number, n: number): boolean {
  for (let k = 0; k < n; k++) if (b[o + k] !== 0xff) return false;
  return true;
}

const f32view = new DataView(new ArrayBuffer(8));

export function ieee32(b: Uint8Array, o: number): number {
  f32view.setUint32(0, u32(b, o));
  return f32view.getFloat32(0);
}

/**
 * Reads `count` unsigned integers of `nbits` bits (0..32) starting at bit `bitPos` of `buf`
 * into `out[outOff...]`. Returns the bit position after the last value.
 * Specialised paths for the widths encoders use most (8, 16, 24 aligned; <= 25 generic fast).
 */
export function unpackBits(
  buf: Uint8Array,
  bitPos: number,
  nbits: number,
  count: number,
  out: Float64Array | Float32Array | Int32Array | Uint32Array,
  outOff = 0,
): number {
  if (nbits === 0) {
    out.fill(0, outOff, outOff + count);
    return bitPos;
  }
  if ((bitPos & 7) === 0 && (nbits === 8 || nbits === 16 || nbits === 24)) {
    let o = bitPos >>> 3;
    const end = outOff + count;
    if (nbits === 8) {
      for (let i = outOff; i < end; i++) out[i] = buf[o++];
    } else if (nbits === 16) {
      for (let i = outOff; i < end; i++, o += 2) out[i] = (buf[o] << 8) | buf[o + 1];
    } else {
      for (let i = outOff; i < end; i++, o += 3) out[i] = (buf[o] << 16) | (buf[o + 1] << 8) | buf[o + 2];
    }
    return bitPos + nbits * count;
  }
  if (nbits <= 25) {
    const mask = nbits === 32 ? 0xffffffff : (1 << nbits) - 1;
    const end = outOff + count;
    let p = bitPos;
    for (let i = outOff; i < end; i++) {
      const o = p >>> 3;
      const word = (buf[o] << 24) | (buf[o + 1] << 16) | (buf[o + 2] << 8) | buf[o + 3];
      out[i] = (word >>> (32 - (p & 7) - nbits)) & mask;
      p += nbits;
    }
    return p;
  }
  // 26..32 bits: may straddle five octets; combine in float arithmetic (exact below 2^53).
  const end = outOff + count;
  let p = bitPos;
  for (let i = outOff; i < end; i++) {
    const o = p >>> 3;
    const s = p & 7;
    const hi = buf[o] & (0xff >>> s);
    const lo = ((buf[o + 1] << 24) | (buf[o + 2] << 16) | (buf[o + 3] << 8) | buf[o + 4]) >>> 0;
    const v = hi * 4294967296 + lo; // 40 - s significant bits
    out[i] = Math.floor(v / 2 ** (40 - s - nbits));
    p += nbits;
  }
  return p;
}

/** Reads one unsigned value of `nbits` (0..32) at `bitPos`. */
export function readBits(buf: Uint8Array, bitPos: number, nbits: number): number {
  let v = 0;
  for (let k = 0; k < nbits; k++) {
    const p = bitPos + k;
    v = v * 2 + ((buf[p >>> 3] >>> (7 - (p & 7))) & 1);
  }
  return v;
}

/**
 * Simple packing fused with scaling: out[outOff + i] = (r + X_i * bs) * ds * factor for `count`
 * values of `nbits` starting at bit `bitPos`. One pass, no intermediate array: the hot loop of
 * template 5.0.
 */
export function unpackScaled(
  buf: Uint8Array,
  bitPos: number,
  nbits: number,
  count: number,
  out: Float32Array,
  outOff: number,
  r: number,
  bs: number,
  ds: number,
): void {
  const end = outOff + count;
  if (nbits === 0) {
    out.fill(r * ds, outOff, end);
    return;
  }
  const a = r * ds;
  const b = bs * ds;
  if ((bitPos & 7) === 0 && nbits === 16) {
    let o = bitPos >>> 3;
    for (let i = outOff; i < end; i++, o += 2) out[i] = a + ((buf[o] << 8) | buf[o + 1]) * b;
    return;
  }
  if ((bitPos & 7) === 0 && nbits === 8) {
    let o = bitPos >>> 3;
    for (let i = outOff; i < end; i++) out[i] = a + buf[o++] * b;
    return;
  }
  if ((bitPos & 7) === 0 && nbits === 24) {
    let o = bitPos >>> 3;
    for (let i = outOff; i < end; i++, o += 3) out[i] = a + ((buf[o] << 16) | (buf[o + 1] << 8) | buf[o + 2]) * b;
    return;
  }
  if (nbits <= 25) {
    const mask = (1 << nbits) - 1;
    let p = bitPos;
    for (let i = outOff; i < end; i++) {
      const o = p >>> 3;
      const word = (buf[o] << 24) | (buf[o + 1] << 16) | (buf[o + 2] << 8) | buf[o + 3];
      out[i] = a + ((word >>> (32 - (p & 7) - nbits)) & mask) * b;
      p += nbits;
    }
    return;
  }
  const tmp = new Float64Array(count);
  unpackBits(buf, bitPos, nbits, count, tmp);
  for (let i = 0; i < count; i++) out[outOff + i] = a + tmp[i] * b;
}
