/**
 * Section 7 unpacking for data representation templates 5.0 (simple), 5.2 (complex),
 * 5.3 (complex + spatial differencing), 5.4 (IEEE), 5.40 (JPEG 2000), 5.41 (PNG).
 * Layouts follow the WMO FM 92 GRIB2 regulations (92.9 and the template notes).
 *
 * The packed integers X become values Y = (R + X * 2^E) / 10^D. All functions return the
 * `count` packed values in scan order, NaN where complex packing marks a value missing.
 */
import { IngestError } from '../canonical.ts';
import { PAD, signMag, unpackBits } from './bits.ts';
import { decodeJpeg2000 } from './jpeg2000.ts';
import { decodePng } from './png.ts';
import type { PackingDef } from './templates.ts';

/** `data` is the payload of section 7 (after octet 5), with PAD zero octets appended. */
export async function unpackValues(p: PackingDef, data: Uint8Array): Promise<Float64Array> {
  const where = `data representation template 5.${p.template}`;
  const bytes = data.length - PAD;
  switch (p.template) {
    case 0: {
      if (p.nbits * p.count > bytes * 8) throw tooShort(where, p.nbits * p.count, bytes);
      const out = new Float64Array(p.count);
      unpackBits(data, 0, p.nbits, p.count, out);
      scale(p, out);
      return out;
    }
    case 2:
    case 3:
      return unpackComplex(p, data, bytes, where);
    case 4:
      return unpackIeee(p, data, bytes, where);
    case 40:
    case 41: {
      const out = new Float64Array(p.count);
      if (p.nbits > 0 && p.count > 0) {
        const payload = data.subarray(0, bytes);
        const raw = p.template === 41 ? decodePng(payload, p.nbits, p.count, where) : await decodeJpeg2000(payload, where);
        if (raw.length !== p.count) {
          throw new IngestError(where, `image holds ${raw.length} values, section 5 declares ${p.count}`);
        }
        for (let i = 0; i < p.count; i++) out[i] = raw[i];
      }
      scale(p, out);
      return out;
    }
    default:
      throw new IngestError(where, 'unsupported data representation template');
  }
}

function tooShort(where: string, bits: number, bytes: number): IngestError {
  return new IngestError(where, `packed data need ${Math.ceil(bits / 8)} octets, section 7 holds ${bytes}`);
}

/** In place: X -> (R + X 2^E) 10^-D, the order of operations ecCodes and g2c use. */
function scale(p: PackingDef, x: Float64Array): void {
  const r = p.reference;
  const bs = 2 ** p.binaryScale;
  const ds = 10 ** -p.decimalScale;
  for (let i = 0; i < x.length; i++) x[i] = (r + x[i] * bs) * ds;
}

function unpackIeee(p: PackingDef, data: Uint8Array, bytes: number, where: string): Float64Array {
  const size = p.precision === 1 ? 4 : 8;
  if (p.count * size > bytes) throw tooShort(where, p.count * size * 8, bytes);
  const out = new Float64Array(p.count);
  const view = new DataView(data.buffer, data.byteOffset, bytes);
  if (size === 4) for (let i = 0; i < p.count; i++) out[i] = view.getFloat32(i * 4);
  else for (let i = 0; i < p.count; i++) out[i] = view.getFloat64(i * 8);
  return out;
}

/**
 * Complex packing (5.2) and complex packing with spatial differencing (5.3).
 * Section 7 holds: [5.3 only: first value(s) and overall minimum, sign-and-magnitude,
 * `extraOctets` each], group references (nbits each), group widths, group lengths (each list
 * padded to an octet), then the values of all groups back to back.
 */
function unpackComplex(p: PackingDef, data: Uint8Array, bytes: number, where: string): Float64Array {
  const ng = p.groups;
  const count = p.count;
  const totalBits = bytes * 8;
  let pos = 0;
  let ival1 = 0;
  let ival2 = 0;
  let minsd = 0;
  const order = p.template === 3 ? p.spatialOrder : 0;
  if (order > 0) {
    const n = p.extraOctets;
    if ((order + 1) * n > bytes) throw tooShort(where, (order + 1) * n * 8, bytes);
    ival1 = signMag(data, 0, n);
    if (order === 2) ival2 = signMag(data, n, n);
    minsd = signMag(data, order * n, n);
    pos = (order + 1) * n * 8;
  }
  if (ng === 0) {
    if (count !== 0) throw new IngestError(where, `zero groups for ${count} values`);
    return new Float64Array(0);
  }
  if (ng > count) throw new IngestError(where, `${ng} groups for only ${count} values`);
  const listBits = ng * (p.nbits + p.groupWidthBits + p.groupLengthBits);
  if (pos + listBits > totalBits) throw tooShort(where, pos + listBits, bytes);

  const refs = new Float64Array(ng);
  pos = align(unpackBits(data, pos, p.nbits, ng, refs));
  const widths = new Int32Array(ng);
  pos = align(unpackBits(data, pos, p.groupWidthBits, ng, widths));
  const lengths = new Int32Array(ng);
  pos = align(unpackBits(data, pos, p.groupLengthBits, ng, lengths));

  let sum = 0;
  let valueBits = 0;
  for (let g = 0; g < ng; g++) {
    widths[g] += p.groupWidthRef;
    if (widths[g] > 32) throw new IngestError(where, `group ${g + 1} is ${widths[g]} bits wide (at most 32)`);
    lengths[g] = g === ng - 1 ? p.lastGroupLength : p.groupLengthRef + lengths[g] * p.groupLengthIncrement;
    sum += lengths[g];
    valueBits += lengths[g] * widths[g];
  }
  if (sum !== count) throw new IngestError(where, `group lengths add up to ${sum}, section 5 declares ${count} values`);
  if (pos + valueBits > totalBits) throw tooShort(where, pos + valueBits, bytes);

  const x = new Float64Array(count);
  const mm = p.missingManagement;
  let missing: Uint8Array | null = null;
  let k = 0;
  if (mm === 0) {
    for (let g = 0; g < ng; g++) {
      const len = lengths[g];
      const w = widths[g];
      const ref = refs[g];
      if (w === 0) {
        x.fill(ref, k, k + len);
      } else {
        pos = unpackBits(data, pos, w, len, x, k);
        for (let i = k; i < k + len; i++) x[i] += ref;
      }
      k += len;
    }
  } else {
    missing = new Uint8Array(count);
    const refMiss1 = 2 ** p.nbits - 1;
    const refMiss2 = mm === 2 ? 2 ** p.nbits - 2 : -1;
    for (let g = 0; g < ng; g++) {
      const len = lengths[g];
      const w = widths[g];
      const ref = refs[g];
      if (w === 0) {
        if (ref === refMiss1 || ref === refMiss2) missing.fill(1, k, k + len);
        else x.fill(ref, k, k + len);
      } else {
        pos = unpackBits(data, pos, w, len, x, k);
        const m1 = 2 ** w - 1;
        const m2 = mm === 2 ? 2 ** w - 2 : -1;
        for (let i = k; i < k + len; i++) {
          const v = x[i];
          if (v === m1 || v === m2) missing[i] = 1;
          else x[i] = v + ref;
        }
      }
      k += len;
    }
  }
  if (order > 0) undoDifferencing(x, missing, order, ival1, ival2, minsd);
  scale(p, x);
  if (missing) for (let i = 0; i < count; i++) if (missing[i]) x[i] = NaN;
  return x;
}

function align(bitPos: number): number {
  return (bitPos + 7) & ~7;
}

/**
 * Spatial differencing runs over the non-missing values only, in scan order: the first
 * `order` values are the stored originals, the rest are differences offset by the minimum.
 */
function undoDifferencing(x: Float64Array, missing: Uint8Array | null, order: number, ival1: number, ival2: number, minsd: number): void {
  const n = x.length;
  if (!missing) {
    if (n === 0) return;
    x[0] = ival1;
    if (order === 1) {
      for (let i = 1; i < n; i++) x[i] = x[i] + minsd + x[i - 1];
    } else {
      if (n > 1) x[1] = ival2;
      for (let i = 2; i < n; i++) x[i] = x[i] + minsd + 2 * x[i - 1] - x[i - 2];
    }
    return;
  }
  let seen = 0;
  let prev1 = 0;
  let prev2 = 0;
  for (let i = 0; i < n; i++) {
    if (missing[i]) continue;
    let v: number;
    if (seen === 0) v = ival1;
    else if (seen === 1 && order === 2) v = ival2;
    else if (order === 1) v = x[i] + minsd + prev1;
    else v = x[i] + minsd + 2 * prev1 - prev2;
    x[i] = v;
    prev2 = prev1;
    prev1 = v;
    seen++;
  }
}
