/**
 * NetCDF classic reader: CDF-1 (classic) and CDF-2 (64-bit offset), after the NetCDF
 * classic format specification (Unidata, "NetCDF Classic and 64-bit Offset File Formats").
 * The header is parsed from the first bytes of the file; data are read slab by slab with
 * positioned reads, so a large file is never loaded whole.
 */
import { open, type FileHandle } from 'node:fs/promises';
import { IngestError } from '../canonical.ts';
import type { AttrValue, NcSource, NcType, NcVariable, NumericArray } from './source.ts';

const WHERE = 'NetCDF-3 header';
const TYPES: Record<number, { type: NcType; size: number }> = {
  1: { type: 'byte', size: 1 },
  2: { type: 'char', size: 1 },
  3: { type: 'short', size: 2 },
  4: { type: 'int', size: 4 },
  5: { type: 'float', size: 4 },
  6: { type: 'double', size: 8 },
};
const TYPE_SIZE: Partial<Record<NcType, number>> = { byte: 1, char: 1, short: 2, int: 4, float: 4, double: 8 };
const TAG_DIMENSION = 0x0a;
const TAG_VARIABLE = 0x0b;
const TAG_ATTRIBUTE = 0x0c;
const STREAMING = 0xffffffff;
/** Reads of nearby runs are merged into windows of at most this many bytes. */
const WINDOW_BYTES = 8 << 20;
/** A single field larger than this is not a pressure-level model field. */
const MAX_SLAB_BYTES = 1 << 30;

interface Nc3Variable extends NcVariable {
  begin: number;
  elementSize: number;
  isRecord: boolean;
}

interface Header {
  version: 1 | 2;
  numrecs: number;
  dims: { name: string; length: number }[];
  attrs: Map<string, AttrValue>;
  vars: Nc3Variable[];
  end: number;
}

/** Signals that the header continues past the bytes read so far. */
class NeedMore extends Error {}

class Cursor {
  pos = 0;
  constructor(
    private readonly buf: Buffer,
    private readonly fileSize: number,
  ) {}
  need(bytes: number, what: string): void {
    if (this.pos + bytes <= this.buf.length) return;
    if (this.pos + bytes > this.fileSize) throw new IngestError(WHERE, `truncated: ${what} runs past the end of the file`);
    throw new NeedMore();
  }
  u32(what: string): number {
    this.need(4, what);
    const v = this.buf.readUInt32BE(this.pos);
    this.pos += 4;
    return v;
  }
  /** a count of items each at least `itemBytes` long: refuses counts the file cannot hold */
  count(what: string, itemBytes: number): number {
    const n = this.u32(what);
    if (n * itemBytes > this.fileSize - this.pos) {
      throw new IngestError(WHERE, `${what} is ${n}, more than the file (${this.fileSize} bytes) can hold`);
    }
    return n;
  }
  bytes(n: number, what: string): Buffer {
    const padded = n + ((4 - (n % 4)) % 4);
    this.need(padded, what);
    const out = this.buf.subarray(this.pos, this.pos + n);
    this.pos += padded;
    return out;
  }
  name(what: string): string {
    const n = this.count(`length of ${what}`, 1);
    if (n === 0) throw new IngestError(WHERE, `${what} is empty`);
    const name = this.bytes(n, what).toString('utf8');
    // NetCDF names are UTF-8 without control characters; anything else is a damaged header
    // eslint-disable-next-line no-control-regex
    if (/[\u0000-\u001f\u007f\ufffd]/.test(name)) throw new IngestError(WHERE, `${what} is not a valid name (${JSON.stringify(name.slice(0, 40))})`);
    return name;
  }
}

function readAttrs(c: Cursor, owner: string): Map<string, AttrValue> {
  const attrs = new Map<string, AttrValue>();
  const tag = c.u32(`attribute list tag of ${owner}`);
  const n = c.count(`number of attributes of ${owner}`, 12);
  if (tag === 0 && n === 0) return attrs;
  if (tag !== TAG_ATTRIBUTE) throw new IngestError(WHERE, `bad attribute list tag ${tag} for ${owner}`);
  for (let i = 0; i < n; i++) {
    const name = c.name(`attribute name ${i} of ${owner}`);
    const typeCode = c.u32(`type of attribute ${owner}:${name}`);
    const t = TYPES[typeCode];
    if (!t) throw new IngestError(WHERE, `attribute ${owner}:${name} has unknown type code ${typeCode}`);
    const len = c.count(`length of attribute ${owner}:${name}`, t.size);
    const raw = c.bytes(len * t.size, `attribute ${owner}:${name}`);
    attrs.set(name, t.type === 'char' ? raw.toString('utf8') : Array.from(decode(Buffer.from(raw), t.type, len), Number));
  }
  return attrs;
}

function parseHeader(buf: Buffer, fileSize: number): Header {
  const c = new Cursor(buf, fileSize);
  c.need(4, 'magic number');
  if (buf.toString('latin1', 0, 3) !== 'CDF' || (buf[3] !== 1 && buf[3] !== 2)) {
    throw new IngestError(WHERE, 'not a CDF-1 or CDF-2 file (bad magic number)');
  }
  c.pos = 4;
  const version = buf[3] as 1 | 2;
  const numrecs = c.u32('number of records');

  const dimTag = c.u32('dimension list tag');
  const ndims = c.count('number of dimensions', 8);
  if (!(dimTag === TAG_DIMENSION || (dimTag === 0 && ndims === 0))) throw new IngestError(WHERE, `bad dimension list tag ${dimTag}`);
  const dims: Header['dims'] = [];
  for (let i = 0; i < ndims; i++) {
    const name = c.name(`name of dimension ${i}`);
    dims.push({ name, length: c.u32(`length of dimension ${name}`) });
  }
  if (dims.filter((d) => d.length === 0).length > 1) throw new IngestError(WHERE, 'more than one record (unlimited) dimension');

  const attrs = readAttrs(c, 'global');
  const varTag = c.u32('variable list tag');
  const nvars = c.count('number of variables', 24);
  if (!(varTag === TAG_VARIABLE || (varTag === 0 && nvars === 0))) throw new IngestError(WHERE, `bad variable list tag ${varTag}`);
  const vars: Nc3Variable[] = [];
  for (let i = 0; i < nvars; i++) vars.push(readVariable(c, version, dims, numrecs));
  return { version, numrecs, dims, attrs, vars, end: c.pos };
}

function readVariable(c: Cursor, version: 1 | 2, dims: Header['dims'], numrecs: number): Nc3Variable {
  const name = c.name('variable name');
  const rank = c.count(`rank of variable ${name}`, 4);
  const dimNames: string[] = [];
  const shape: number[] = [];
  let isRecord = false;
  for (let d = 0; d < rank; d++) {
    const id = c.u32(`dimension id ${d} of variable ${name}`);
    const dim = dims[id];
    if (!dim) throw new IngestError(WHERE, `variable ${name} refers to dimension id ${id}, but there are ${dims.length} dimensions`);
    if (dim.length === 0) {
      if (d !== 0) throw new IngestError(WHERE, `variable ${name} uses the record dimension ${dim.name} in position ${d}, not first`);
      isRecord = true;
    }
    dimNames.push(dim.name);
    shape.push(dim.length === 0 ? numrecs : dim.length);
  }
  const attrs = readAttrs(c, name);
  const typeCode = c.u32(`type of variable ${name}`);
  const t = TYPES[typeCode];
  if (!t) throw new IngestError(WHERE, `variable ${name} has unknown type code ${typeCode}`);
  c.u32(`vsize of variable ${name}`); // recomputed: vsize saturates for variables over 4 GiB
  const begin = version === 1 ? c.u32(`begin of ${name}`) : c.u32(`begin of ${name}`) * 2 ** 32 + c.u32(`begin of ${name}`);
  return { name, dims: dimNames, shape, type: t.type, attrs, begin, elementSize: t.size, isRecord };
}

/** Bytes of one record (or of the whole variable) before padding. */
function innerBytes(v: Nc3Variable): number {
  return (v.isRecord ? v.shape.slice(1) : v.shape).reduce((a, b) => a * b, 1) * v.elementSize;
}

const pad4 = (n: number) => n + ((4 - (n % 4)) % 4);

export function decode(buf: Buffer, type: NcType, n: number): NumericArray {
  // typed-array views need an aligned, exclusive buffer: copy only when `buf` is a view
  const own = buf.byteOffset === 0 && buf.buffer.byteLength === buf.length;
  const ab = (own ? buf.buffer : buf.buffer.slice(buf.byteOffset, buf.byteOffset + buf.length)) as ArrayBuffer;
  const b = Buffer.from(ab, 0, n * (TYPE_SIZE[type] ?? 1));
  switch (type) {
    case 'byte':
      return new Int8Array(ab, 0, n);
    case 'char':
      return new Uint8Array(ab, 0, n);
    case 'short':
      b.swap16();
      return new Int16Array(ab, 0, n);
    case 'int':
      b.swap32();
      return new Int32Array(ab, 0, n);
    case 'float':
      b.swap32();
      return new Float32Array(ab, 0, n);
    case 'double':
      b.swap64();
      return new Float64Array(ab, 0, n);
    default:
      throw new IngestError('NetCDF-3', `type ${type} cannot be decoded`);
  }
}

async function readExactly(fh: FileHandle, buf: Buffer, offset: number, length: number, position: number, what: string) {
  let done = 0;
  while (done < length) {
    const { bytesRead } = await fh.read(buf, offset + done, length - done, position + done);
    if (bytesRead === 0) throw new IngestError(what, `truncated file: data end at byte ${position + done}, expected ${length - done} more bytes`);
    done += bytesRead;
  }
}

export class Nc3Source implements NcSource {
  readonly format = 'netcdf3' as const;
  readonly dims = new Map<string, number>();
  readonly attrs: Map<string, AttrValue>;
  readonly variables = new Map<string, NcVariable>();
  private readonly recsize: number;

  private constructor(
    private readonly fh: FileHandle,
    header: Header,
    recsize: number,
  ) {
    this.attrs = header.attrs;
    this.recsize = recsize;
    for (const d of header.dims) this.dims.set(d.name, d.length === 0 ? header.numrecs : d.length);
    for (const v of header.vars) this.variables.set(v.name, v);
  }

  static async open(path: string): Promise<Nc3Source> {
    const fh = await open(path, 'r');
    try {
      const fileSize = (await fh.stat()).size;
      let length = Math.min(fileSize, 64 << 10);
      for (;;) {
        const buf = Buffer.alloc(length);
        await readExactly(fh, buf, 0, length, 0, WHERE);
        try {
          const header = parseHeader(buf, fileSize);
          return new Nc3Source(fh, header, checkLayout(header, fileSize));
        } catch (e) {
          if (!(e instanceof NeedMore)) throw e;
          length = Math.min(fileSize, length * 4);
        }
      }
    } catch (e) {
      await fh.close();
      throw e;
    }
  }

  async read(variable: NcVariable, start: number[], count: number[]): Promise<NumericArray> {
    const v = variable as Nc3Variable;
    checkSlab(v, start, count);
    const total = count.reduce((a, b) => a * b, 1);
    if (total * v.elementSize > MAX_SLAB_BYTES) throw new IngestError(`variable ${v.name}`, `a slab of ${total} values is too large`);
    const out = Buffer.alloc(total * v.elementSize);
    if (total === 0) return decode(out, v.type, 0);
    if (!v.isRecord) {
      await this.readInner(v, v.begin, v.shape, start, count, out, 0);
    } else {
      const innerCount = count.slice(1);
      const step = innerCount.reduce((a, b) => a * b, 1) * v.elementSize;
      for (let r = 0; r < count[0]; r++) {
        const base = v.begin + (start[0] + r) * this.recsize;
        await this.readInner(v, base, v.shape.slice(1), start.slice(1), innerCount, out, r * step);
      }
    }
    return decode(out, v.type, total);
  }

  /** One contiguous array at `base` with `shape`: reads the slab as runs, merged into windows. */
  private async readInner(v: Nc3Variable, base: number, shape: number[], start: number[], count: number[], out: Buffer, outOffset: number) {
    const n = shape.length;
    let k = n; // dims k.. are read whole, so each run spans dim k-1's count and everything inside
    while (k > 0 && start[k - 1] === 0 && count[k - 1] === shape[k - 1]) k--;
    const strides = new Array<number>(n).fill(1);
    for (let d = n - 2; d >= 0; d--) strides[d] = strides[d + 1] * shape[d + 1];
    const runElems = k === 0 ? (n === 0 ? 1 : strides[0] * shape[0]) : count[k - 1] * strides[k - 1];
    const runBytes = runElems * v.elementSize;
    const outerDims = Math.max(0, k - 1);
    const nRuns = count.slice(0, outerDims).reduce((a, b) => a * b, 1);
    const offsets = new Float64Array(nRuns);
    const idx = new Array<number>(outerDims).fill(0);
    for (let r = 0; r < nRuns; r++) {
      let elem = k > 0 ? start[k - 1] * strides[k - 1] : 0;
      for (let d = 0; d < outerDims; d++) elem += (start[d] + idx[d]) * strides[d];
      offsets[r] = base + elem * v.elementSize;
      for (let d = outerDims - 1; d >= 0; d--) {
        if (++idx[d] < count[d]) break;
        idx[d] = 0;
      }
    }
    const where = `variable ${v.name}`;
    let r = 0;
    while (r < nRuns) {
      if (runBytes >= WINDOW_BYTES || nRuns === 1) {
        await readExactly(this.fh, out, outOffset + r * runBytes, runBytes, offsets[r], where);
        r++;
        continue;
      }
      let last = r;
      while (last + 1 < nRuns && offsets[last + 1] + runBytes - offsets[r] <= WINDOW_BYTES) last++;
      const span = offsets[last] + runBytes - offsets[r];
      const window = Buffer.alloc(span);
      await readExactly(this.fh, window, 0, span, offsets[r], where);
      for (let i = r; i <= last; i++) {
        const from = offsets[i] - offsets[r];
        window.copy(out, outOffset + i * runBytes, from, from + runBytes);
      }
      r = last + 1;
    }
  }

  async close(): Promise<void> {
    await this.fh.close();
  }
}

function checkSlab(v: NcVariable, start: number[], count: number[]) {
  if (start.length !== v.shape.length || count.length !== v.shape.length) {
    throw new IngestError(`variable ${v.name}`, `slab rank ${start.length} does not match the variable's rank ${v.shape.length}`);
  }
  for (let d = 0; d < v.shape.length; d++) {
    if (start[d] < 0 || count[d] < 0 || start[d] + count[d] > v.shape[d]) {
      throw new IngestError(`variable ${v.name}`, `slab ${start[d]}+${count[d]} is outside dimension ${v.dims[d]} (length ${v.shape[d]})`);
    }
  }
}

/** Record size, and a refusal for any variable whose extent the file cannot hold. */
function checkLayout(h: Header, fileSize: number): number {
  const recordVars = h.vars.filter((v) => v.isRecord);
  let recsize = recordVars.reduce((a, v) => a + pad4(innerBytes(v)), 0);
  // The classic format packs a lone record variable without padding between records.
  if (recordVars.length === 1) recsize = innerBytes(recordVars[0]);
  for (const v of h.vars) {
    const bytes = innerBytes(v);
    if (bytes > fileSize) {
      throw new IngestError(`variable ${v.name}`, `absurd dimensions: ${v.dims.join(' x ')} = ${v.shape.join(' x ')} values of ${v.type} need ${bytes} bytes, more than the whole file (${fileSize} bytes)`);
    }
    if (v.begin < h.end) throw new IngestError(WHERE, `variable ${v.name} begins at byte ${v.begin}, inside the header (which ends at ${h.end})`);
  }
  let numrecs = h.numrecs;
  if (numrecs === STREAMING) {
    const recStart = Math.min(...recordVars.map((v) => v.begin));
    numrecs = recsize > 0 ? Math.floor((fileSize - recStart) / recsize) : 0;
    for (const v of recordVars) v.shape[0] = numrecs;
    h.numrecs = numrecs;
  }
  for (const v of h.vars) {
    const end = v.isRecord ? (numrecs === 0 ? v.begin : v.begin + (numrecs - 1) * recsize + innerBytes(v)) : v.begin + innerBytes(v);
    if (end > fileSize) {
      throw new IngestError(`variable ${v.name}`, `truncated file: the variable's data end at byte ${end}, but the file has ${fileSize} bytes`);
    }
  }
  return recsize;
}
