/**
 * First pass over a GRIB2 file: walks every message's sections (WMO FM 92: 0 indicator,
 * 1 identification, 2 local use, 3 grid, 4 product, 5 data representation, 6 bitmap, 7 data,
 * 8 end "7777"), with repetition of sections 2-7 / 3-7 / 4-7 inside one message, and records
 * where each field's bitmap and data lie. Reads headers through the file handle in bounded
 * chunks; never holds the whole file.
 */
import type { FileHandle } from 'node:fs/promises';
import { IngestError } from '../canonical.ts';
import { u16, u32, u64 } from './bits.ts';

/** One field: the sections in force for one (4, 5, 6, 7) group. */
export interface RawField {
  message: number; // 1-based
  offset: number; // file offset of the message
  discipline: number;
  sec1: Uint8Array;
  sec3: Uint8Array;
  /** file offset of section 3, identifies the grid definition for caching */
  sec3Offset: number;
  sec4: Uint8Array;
  sec5: Uint8Array;
  /** bitmap octets in the file (after octet 6 of section 6), or null when there is none */
  bitmap: { offset: number; length: number } | null;
  /** section 7 payload (after octet 5) */
  data: { offset: number; length: number };
}

const MAX_HEADER_SECTION = 1 << 20;
// headers of one message (sections 1-5 and the section 6/7 headers) fit in a few hundred octets
const CHUNK = 4096;

/** Serves small reads from one cached chunk of the file. */
export class ChunkReader {
  private buf = new Uint8Array(0);
  private start = 0;
  constructor(
    private readonly handle: FileHandle,
    readonly size: number,
  ) {}

  async read(pos: number, n: number): Promise<Uint8Array> {
    if (pos < 0 || n < 0 || pos + n > this.size) {
      throw new IngestError('file', `read of ${n} octets at ${pos} goes past the end of the file (${this.size} octets): truncated`);
    }
    if (pos >= this.start && pos + n <= this.start + this.buf.length) {
      return this.buf.subarray(pos - this.start, pos - this.start + n);
    }
    const len = Math.min(Math.max(n, CHUNK), this.size - pos);
    const buf = new Uint8Array(len);
    const { bytesRead } = await this.handle.read(buf, 0, len, pos);
    if (bytesRead < n) throw new IngestError('file', `file shrank while reading at octet ${pos}`);
    this.buf = buf;
    this.start = pos;
    return buf.subarray(0, n);
  }

  /** A fresh copy (not a view into the shared chunk). */
  async copy(pos: number, n: number): Promise<Uint8Array> {
    return (await this.read(pos, n)).slice();
  }
}

// allowed successors of each section inside a message (8 = end marker)
const NEXT: Record<number, number[]> = { 1: [2, 3], 2: [3], 3: [4], 4: [5], 5: [6], 6: [7], 7: [2, 3, 4, 8] };

export async function scanMessages(reader: ChunkReader): Promise<RawField[]> {
  if (reader.size === 0) throw new IngestError('file', 'the file is empty');
  const fields: RawField[] = [];
  let offset = 0;
  let message = 0;
  while (offset < reader.size) {
    message++;
    const where = `message ${message} section 0`;
    if (reader.size - offset < 16) {
      throw new IngestError(where, `only ${reader.size - offset} octets left at offset ${offset}, a GRIB2 indicator section needs 16 (truncated or trailing bytes)`);
    }
    const s0 = await reader.read(offset, 16);
    if (s0[0] !== 0x47 || s0[1] !== 0x52 || s0[2] !== 0x49 || s0[3] !== 0x42) {
      throw new IngestError(where, `no "GRIB" marker at offset ${offset}`);
    }
    if (s0[7] !== 2) {
      const hint = s0[7] === 1 ? '; convert with ecCodes: `grib_set -s edition=2 in.grib out.grib2`' : '';
      throw new IngestError(where, `GRIB edition ${s0[7]} is not supported, only edition 2${hint}`);
    }
    const total = u64(s0, 8);
    if (total < 16 + 21 + 4) throw new IngestError(where, `declared message length ${total} is too small`);
    if (offset + total > reader.size) {
      throw new IngestError(where, `message declares ${total} octets but the file ends ${reader.size - offset} octets after its start (truncated)`);
    }
    await scanSections(reader, offset, total, message, s0[6], fields);
    offset += total;
  }
  return fields;
}

async function scanSections(reader: ChunkReader, offset: number, total: number, message: number, discipline: number, out: RawField[]): Promise<void> {
  const end = offset + total - 4;
  let pos = offset + 16;
  let prev = 0;
  let sec1: Uint8Array | null = null;
  let sec3: Uint8Array | null = null;
  let sec3Offset = 0;
  let sec4: Uint8Array | null = null;
  let sec5: Uint8Array | null = null;
  let bitmap: RawField['bitmap'] = null;
  let lastBitmap: RawField['bitmap'] = null;
  while (true) {
    if (pos === end) {
      if (prev !== 7) throw new IngestError(`message ${message}`, `ends after section ${prev}, before any data section 7`);
      const tail = await reader.read(end, 4);
      if (tail[0] !== 0x37 || tail[1] !== 0x37 || tail[2] !== 0x37 || tail[3] !== 0x37) {
        throw new IngestError(`message ${message} section 8`, 'end marker "7777" missing where the declared message length puts it');
      }
      return;
    }
    if (end - pos < 5) throw new IngestError(`message ${message}`, `${end - pos} stray octets before the end marker`);
    const h = await reader.read(pos, 5);
    const len = u32(h, 0);
    const num = h[4];
    const where = `message ${message} section ${num}`;
    if (num < 1 || num > 7) throw new IngestError(`message ${message}`, `unknown section number ${num} at offset ${pos}`);
    if (prev === 0 ? num !== 1 : !NEXT[prev].includes(num)) {
      throw new IngestError(where, `section ${num} follows section ${prev || 0}: out of order`);
    }
    if (len < 5) throw new IngestError(where, `declared length ${len} is shorter than the section header`);
    if (pos + len > end) throw new IngestError(where, `declared length ${len} runs past the end of the message`);
    if (num !== 2 && num !== 6 && num !== 7 && len > MAX_HEADER_SECTION) throw new IngestError(where, `absurd section length ${len}`);
    switch (num) {
      case 1:
        if (len < 21) throw new IngestError(where, `length ${len} is shorter than the 21 octets of section 1`);
        sec1 = await reader.copy(pos, len);
        break;
      case 3:
        if (len < 14) throw new IngestError(where, `length ${len} is shorter than the 14 octets before the grid template`);
        sec3 = await reader.copy(pos, len);
        sec3Offset = pos;
        break;
      case 4:
        if (len < 9) throw new IngestError(where, `length ${len} is shorter than the 9 octets before the product template`);
        sec4 = await reader.copy(pos, len);
        break;
      case 5:
        if (len < 11) throw new IngestError(where, `length ${len} is shorter than the 11 octets before the data representation template`);
        sec5 = await reader.copy(pos, len);
        break;
      case 6: {
        if (len < 6) throw new IngestError(where, `length ${len} is shorter than the 6 octets of a bitmap section header`);
        const indicator = (await reader.read(pos + 5, 1))[0];
        if (indicator === 0) {
          const npts = u32(sec3!, 6);
          if ((len - 6) * 8 < npts) throw new IngestError(where, `bitmap holds ${(len - 6) * 8} bits for ${npts} grid points`);
          bitmap = lastBitmap = { offset: pos + 6, length: len - 6 };
        } else if (indicator === 254) {
          if (!lastBitmap) throw new IngestError(where, 'bitmap indicator 254 (previously defined bitmap) but no bitmap precedes it in this message');
          const npts = u32(sec3!, 6);
          if (lastBitmap.length * 8 < npts) throw new IngestError(where, `the previously defined bitmap holds ${lastBitmap.length * 8} bits for ${npts} grid points`);
          bitmap = lastBitmap;
        } else if (indicator === 255) {
          bitmap = null;
        } else {
          throw new IngestError(where, `predefined bitmap ${indicator} is not supported`);
        }
        break;
      }
      case 7:
        out.push({
          message,
          offset,
          discipline,
          sec1: sec1!,
          sec3: sec3!,
          sec3Offset,
          sec4: sec4!,
          sec5: sec5!,
          bitmap,
          data: { offset: pos + 5, length: len - 5 },
        });
        break;
    }
    prev = num;
    pos += len;
  }
}

/** Reference time from section 1 (octets 13-19) as ISO 8601 UTC. */
export function referenceTime(sec1: Uint8Array, message: number): string {
  const y = u16(sec1, 12);
  const [mo, d, h, mi, s] = [sec1[14], sec1[15], sec1[16], sec1[17], sec1[18]];
  if (mo < 1 || mo > 12 || d < 1 || d > 31 || h > 23 || mi > 59 || s > 59) {
    throw new IngestError(`message ${message} section 1`, `invalid reference time ${y}-${mo}-${d} ${h}:${mi}:${s}`);
  }
  const p = (n: number) => String(n).padStart(2, '0');
  return `${String(y).padStart(4, '0')}-${p(mo)}-${p(d)}T${p(h)}:${p(mi)}:${p(s)}Z`;
}
