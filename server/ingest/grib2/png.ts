/**
 * Minimal PNG reader for GRIB2 template 5.41 (PNG specification, W3C/ISO 15948): IHDR,
 * concatenated IDAT inflated with node's zlib, scanline filters 0-4 undone here. Each pixel's
 * octets, read big-endian across its channels, are one packed integer: ecCodes writes grey
 * for 1-16 bits, RGB for 24 and RGBA for 32.
 */
import { inflateSync } from 'node:zlib';
import { IngestError } from '../canonical.ts';
import { u32, unpackBits } from './bits.ts';

const SIGNATURE = [0x89, 0x50, 0x4e, 0x47, 0x0d, 0x0a, 0x1a, 0x0a];
const CHANNELS: Record<number, number> = { 0: 1, 2: 3, 4: 2, 6: 4 };

export function decodePng(png: Uint8Array, nbits: number, count: number, where: string): Float64Array {
  if (png.length < 33 || SIGNATURE.some((b, i) => png[i] !== b)) throw new IngestError(where, 'section 7 does not hold a PNG image');
  let o = 8;
  let width = 0;
  let height = 0;
  let depth = 0;
  let colour = -1;
  const idat: Uint8Array[] = [];
  while (o + 8 <= png.length) {
    const len = u32(png, o);
    const type = String.fromCharCode(png[o + 4], png[o + 5], png[o + 6], png[o + 7]);
    if (o + 12 + len > png.length) throw new IngestError(where, `PNG chunk ${type} runs past the end of section 7`);
    const body = png.subarray(o + 8, o + 8 + len);
    if (type === 'IHDR') {
      if (len < 13) throw new IngestError(where, 'PNG header chunk too short');
      width = u32(body, 0);
      height = u32(body, 4);
      depth = body[8];
      colour = body[9];
      if (body[12] !== 0) throw new IngestError(where, 'interlaced PNG is not supported');
    } else if (type === 'IDAT') {
      idat.push(body);
    } else if (type === 'IEND') {
      break;
    }
    o += 12 + len;
  }
  const channels = CHANNELS[colour];
  if (!channels || width < 1 || height < 1 || ![1, 2, 4, 8, 16].includes(depth) || (depth < 8 && channels !== 1)) {
    throw new IngestError(where, `PNG colour type ${colour} with ${depth}-bit depth is not supported`);
  }
  const bitsPerPixel = channels * depth;
  if (bitsPerPixel < nbits) throw new IngestError(where, `PNG holds ${bitsPerPixel} bits per pixel, section 5 declares ${nbits}`);
  if (width * height !== count) throw new IngestError(where, `PNG is ${width} x ${height} pixels, section 5 declares ${count} values`);
  const rowBytes = Math.ceil((width * bitsPerPixel) / 8);
  let raw: Buffer;
  try {
    raw = inflateSync(Buffer.concat(idat));
  } catch (err) {
    throw new IngestError(where, `PNG image data do not inflate (${(err as Error).message})`);
  }
  if (raw.length < (rowBytes + 1) * height) {
    throw new IngestError(where, `PNG image data hold ${raw.length} octets, ${(rowBytes + 1) * height} expected`);
  }
  const bpp = Math.max(1, bitsPerPixel >>> 3);
  const pixels = new Uint8Array(rowBytes * height + 8);
  unfilter(raw, pixels, rowBytes, height, bpp, where);

  const out = new Float64Array(width * height);
  if (bitsPerPixel < 8) {
    for (let r = 0; r < height; r++) unpackBits(pixels, r * rowBytes * 8, bitsPerPixel, width, out, r * width);
  } else {
    unpackBits(pixels, 0, bitsPerPixel, width * height, out);
  }
  return out;
}

function unfilter(raw: Uint8Array, px: Uint8Array, rowBytes: number, height: number, bpp: number, where: string): void {
  for (let r = 0; r < height; r++) {
    const f = raw[r * (rowBytes + 1)];
    const src = r * (rowBytes + 1) + 1;
    const dst = r * rowBytes;
    const up = dst - rowBytes;
    for (let i = 0; i < rowBytes; i++) {
      const x = raw[src + i];
      const a = i >= bpp ? px[dst + i - bpp] : 0;
      const b = r > 0 ? px[up + i] : 0;
      let v: number;
      switch (f) {
        case 0: v = x; break;
        case 1: v = x + a; break;
        case 2: v = x + b; break;
        case 3: v = x + ((a + b) >>> 1); break;
        case 4: {
          const c = r > 0 && i >= bpp ? px[up + i - bpp] : 0;
          const p = a + b - c;
          const pa = Math.abs(p - a);
          const pb = Math.abs(p - b);
          const pc = Math.abs(p - c);
          v = x + (pa <= pb && pa <= pc ? a : pb <= pc ? b : c);
          break;
        }
        default:
          throw new IngestError(where, `PNG row ${r} uses unknown filter type ${f}`);
      }
      px[dst + i] = v & 0xff;
    }
  }
}
