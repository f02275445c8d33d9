/**
 * GRIB2 reader: indexes a file's messages (scan.ts), keeps the fields Liftwise knows
 * (params.ts) on one regular lat/lon grid, and decodes fields on demand into the canonical
 * layout of ../canonical.ts.
 */
import { open, type FileHandle } from 'node:fs/promises';
import { CANONICAL_VARIABLES, IngestError, type CanonicalVariable, type RunInfo, type RunReader, type VariableInfo } from '../canonical.ts';
import { PAD, u16, unpackScaled } from './bits.ts';
import { canonicalAxes, sameGrid, toCanonical, type CanonicalGrid } from './grid.ts';
import { centreName, hoursPerUnit, lookupParam, type ParamMapping } from './params.ts';
import { ChunkReader, referenceTime, scanMessages, type RawField } from './scan.ts';
import { parseGrid, parsePacking, parseProduct, type GridDef, type PackingDef } from './templates.ts';
import { unpackValues } from './unpack.ts';

/** A field Liftwise reads, with its place in the run. */
export interface Grib2Field {
  raw: RawField;
  param: ParamMapping;
  grid: GridDef;
  packing: PackingDef;
  member: number;
  /** Pa for isobaric fields, 0 for surface fields */
  level: number;
  /** hours: the forecast time; for accumulations the start of the interval */
  start: number;
  /** hours: the valid time (end of the interval for accumulations) */
  step: number;
}

/** A message Liftwise does not read, for `inspect`. */
export interface SkippedField {
  message: number;
  parameter: string;
  levelType: number;
  reason: string;
}

export interface Grib2Index {
  info: RunInfo;
  fields: Grib2Field[];
  skipped: SkippedField[];
}

/** Re-throws anything that is not already an IngestError as one, so callers see one error type. */
export async function guard<T>(where: string, fn: () => Promise<T>): Promise<T> {
  try {
    return await fn();
  } catch (err) {
    if (err instanceof IngestError) throw err;
    throw new IngestError(where, `malformed data (${err instanceof Error ? err.message : String(err)})`);
  }
}

export async function openGrib2(path: string): Promise<Grib2Reader> {
  const handle = await open(path, 'r');
  try {
    const size = (await handle.stat()).size;
    const index = await guard('GRIB2', async () => buildIndex(await scanMessages(new ChunkReader(handle, size))));
    return new Grib2Reader(handle, index);
  } catch (err) {
    await handle.close();
    throw err;
  }
}

function toHours(value: number, unit: number, where: string): number {
  const h = hoursPerUnit(unit);
  if (h === null) throw new IngestError(where, `time unit ${unit} (Code table 4.4) has no fixed length in hours`);
  return Math.round(value * h * 1e6) / 1e6;
}

function classify(raw: RawField, gridCache: Map<number, { def: GridDef; axes: CanonicalGrid }>): Grib2Field | SkippedField {
  const s4 = raw.sec4;
  const parameter = `${raw.discipline}/${s4[9]}/${s4[10]}`;
  const levelType = s4.length > 22 ? s4[22] : -1;
  const skip = (reason: string): SkippedField => ({ message: raw.message, parameter, levelType, reason });
  const param = lookupParam(raw.discipline, s4[9], s4[10], levelType);
  if (!param) return skip(lookupParam(raw.discipline, s4[9], s4[10], 100) || lookupParam(raw.discipline, s4[9], s4[10], 1) ? `level type ${levelType} not read` : 'parameter not read');
  const where = `message ${raw.message} product template 4.${u16(s4, 7)}`;
  const product = parseProduct(s4);
  if (param.accumulated && (!product.stat || product.stat.process !== 1)) return skip('not an accumulation (needs template 4.8 or 4.11 with statistical process 1)');
  if (!param.accumulated && product.stat) return skip(`statistically processed (process ${product.stat.process})`);
  let grid = gridCache.get(raw.sec3Offset);
  if (!grid) {
    const def = parseGrid(raw.sec3);
    grid = { def, axes: canonicalAxes(def) };
    gridCache.set(raw.sec3Offset, grid);
  }
  const start = toHours(product.forecastTime, product.timeUnit, where);
  const step = product.stat ? start + toHours(product.stat.rangeLength, product.stat.rangeUnit, where) : start;
  let level = 0;
  if (levelType === 100) {
    if (!(product.level1Value > 0)) throw new IngestError(where, `isobaric level value ${product.level1Value} Pa is not a pressure`);
    level = Math.round(product.level1Value * 1000) / 1000;
  }
  const packing = parsePacking(raw.sec5);
  const npts = grid.def.ni * grid.def.nj;
  if (raw.bitmap ? packing.count > npts : packing.count !== npts) {
    throw new IngestError(`message ${raw.message} section 5`, `${packing.count} packed values for ${npts} grid points${raw.bitmap ? ' (more values than points)' : ' and no bitmap'}`);
  }
  return { raw, param, grid: grid.def, packing, member: product.member ?? 0, level, start, step };
}

/** Prefixes template-level errors with the message they come from. */
function withMessage<T>(message: number, fn: () => T): T {
  try {
    return fn();
  } catch (err) {
    if (err instanceof IngestError && !err.where.startsWith('message')) {
      throw new IngestError(`message ${message} ${err.where}`, err.message.slice(err.where.length + 2));
    }
    throw err;
  }
}

function buildIndex(raws: RawField[]): Grib2Index {
  const gridCache = new Map<number, { def: GridDef; axes: CanonicalGrid }>();
  const fields: Grib2Field[] = [];
  const skipped: SkippedField[] = [];
  let axes: CanonicalGrid | null = null;
  let axesFrom = 0;
  const keys = new Set<string>();
  for (const raw of raws) {
    const f = withMessage(raw.message, () => classify(raw, gridCache));
    if (!('raw' in f)) {
      skipped.push(f);
      continue;
    }
    const a = gridCache.get(raw.sec3Offset)!.axes;
    if (!axes) {
      axes = a;
      axesFrom = raw.message;
    } else if (!sameGrid(axes, a)) {
      throw new IngestError(`message ${raw.message} section 3`, `grid ${describe(a)} differs from the grid ${describe(axes)} of message ${axesFrom}; one file must hold one grid`);
    }
    const key = `${f.param.name}|${f.member}|${f.level}|${f.start}|${f.step}`;
    if (keys.has(key)) throw new IngestError(`message ${raw.message}`, `duplicate field ${f.param.name} member ${f.member} level ${f.level} Pa step ${f.step} h`);
    keys.add(key);
    fields.push(f);
  }
  if (!axes || fields.length === 0) {
    const seen = [...new Set(skipped.map((s) => s.parameter))].join(', ');
    throw new IngestError('GRIB2', `no field Liftwise reads in this file (parameters found: ${seen || 'none'})`);
  }
  const ref = referenceTime(fields[0].raw.sec1, fields[0].raw.message);
  for (const f of fields) {
    const r = referenceTime(f.raw.sec1, f.raw.message);
    if (r !== ref) throw new IngestError(`message ${f.raw.message} section 1`, `reference time ${r} differs from ${ref}: one file must hold one run`);
  }
  const sorted = (xs: Iterable<number>, desc = false) => [...new Set(xs)].sort((a, b) => (desc ? b - a : a - b));
  const variables: VariableInfo[] = [];
  for (const name of Object.keys(CANONICAL_VARIABLES) as CanonicalVariable[]) {
    const own = fields.filter((f) => f.param.name === name);
    if (own.length === 0) continue;
    const sources = [...new Set(own.map((f) => f.param.source))].join(', ');
    const pressure = CANONICAL_VARIABLES[name].kind === 'pressure';
    variables.push({ name, sourceName: sources, levels: pressure ? sorted(own.map((f) => f.level), true) : [] });
  }
  const pressureLevels = fields.filter((f) => CANONICAL_VARIABLES[f.param.name].kind === 'pressure').map((f) => f.level);
  const centre = u16(fields[0].raw.sec1, 5);
  const info: RunInfo = {
    format: 'grib2',
    model: centreName(centre),
    referenceTime: ref,
    steps: sorted(fields.map((f) => f.step)),
    members: sorted(fields.map((f) => f.member)),
    isEnsemble: fields.some((f) => f.raw.sec4.length > 8 && (u16(f.raw.sec4, 7) === 1 || u16(f.raw.sec4, 7) === 11)),
    axes: { lat: axes.lat, lon: axes.lon, levels: Float64Array.from(sorted(pressureLevels, true)) },
    variables,
  };
  return { info, fields, skipped };
}

function describe(a: CanonicalGrid): string {
  return `${a.lat.length}x${a.lon.length} (lat ${a.lat[0]}..${a.lat[a.lat.length - 1]}, lon ${a.lon[0]}..${a.lon[a.lon.length - 1]})`;
}

export class Grib2Reader implements RunReader {
  readonly info: RunInfo;
  readonly fields: Grib2Field[];
  readonly skipped: SkippedField[];
  constructor(
    private readonly handle: FileHandle,
    index: Grib2Index,
  ) {
    this.info = index.info;
    this.fields = index.fields;
    this.skipped = index.skipped;
  }

  async readField(name: CanonicalVariable, member: number, step: number): Promise<Float32Array> {
    return guard(`GRIB2 field ${name}`, () => this.read(name, member, step));
  }

  private async read(name: CanonicalVariable, member: number, step: number): Promise<Float32Array> {
    const where = `variable ${name}`;
    const v = this.info.variables.find((x) => x.name === name);
    if (!v) throw new IngestError(where, `not in this file (it has ${this.info.variables.map((x) => x.name).join(', ')})`);
    if (!this.info.members.includes(member)) throw new IngestError(where, `member ${member} is not in this file (members ${this.info.members.join(', ')})`);
    const own = this.fields.filter((f) => f.param.name === name && f.member === member);
    const nlat = this.info.axes.lat.length;
    const nlon = this.info.axes.lon.length;
    const plane = nlat * nlon;
    if (CANONICAL_VARIABLES[name].kind === 'pressure') {
      const levels = this.info.axes.levels;
      const out = new Float32Array(levels.length * plane).fill(NaN);
      const atStep = own.filter((f) => f.step === step);
      if (atStep.length === 0) throw new IngestError(where, `no field for member ${member} at step ${step} h`);
      for (const f of atStep) {
        const k = levels.indexOf(f.level);
        out.set(await this.decode(f), k * plane);
      }
      return out;
    }
    if (name !== 'tp') {
      const f = own.find((x) => x.step === step);
      if (!f) throw new IngestError(where, `no field for member ${member} at step ${step} h`);
      return this.decode(f);
    }
    return this.accumulation(own, member, step, plane);
  }

  /** tp from the reference time to `step`: one [0, step] field, or a chain of intervals summed. */
  private async accumulation(own: Grib2Field[], member: number, step: number, plane: number): Promise<Float32Array> {
    const chain: Grib2Field[] = [];
    let end = step;
    while (end > 0) {
      const ending = own.filter((f) => f.step === end && f.start < end).sort((a, b) => a.start - b.start);
      if (ending.length === 0) {
        throw new IngestError('variable tp', `cannot build the accumulation 0..${step} h for member ${member}: no interval ends at ${end} h`);
      }
      chain.push(ending[0]);
      end = ending[0].start;
    }
    const out = new Float32Array(plane);
    for (const f of chain) {
      const part = await this.decode(f);
      for (let i = 0; i < plane; i++) out[i] += part[i];
    }
    return out;
  }

  /** Decodes one field into canonical [lat][lon] order and canonical units. */
  async decode(f: Grib2Field): Promise<Float32Array> {
    const payload = await this.readPayload(f);
    const bits = f.raw.bitmap ? await this.readBytes(f.raw.bitmap.offset, f.raw.bitmap.length) : null;
    return this.decodePayload(f, payload, bits);
  }

  /** Section 7 of a field, with the PAD zero octets the bit readers rely on. */
  readPayload(f: Grib2Field): Promise<Uint8Array> {
    return this.readBytes(f.raw.data.offset, f.raw.data.length, PAD);
  }

  /** Decoding proper, from section 7 (readPayload) and the bitmap octets already in memory. */
  async decodePayload(f: Grib2Field, payload: Uint8Array, bits: Uint8Array | null): Promise<Float32Array> {
    const where = `message ${f.raw.message} data representation template 5.${f.packing.template}`;
    const npts = f.grid.ni * f.grid.nj;
    if (f.packing.template === 0 && !bits && (f.grid.scanMode & 0xb0) === 0) return this.decodeSimpleRows(f, payload, where);
    const values = await unpackValues(f.packing, payload);
    const scan = new Float32Array(npts);
    const factor = f.param.factor;
    if (bits) {
      let present = 0;
      for (let n = 0; n < npts; n++) present += (bits[n >>> 3] >>> (7 - (n & 7))) & 1;
      if (present !== values.length) throw new IngestError(where, `bitmap marks ${present} points present, section 5 declares ${values.length} values`);
      let k = 0;
      for (let n = 0; n < npts; n++) scan[n] = (bits[n >>> 3] >>> (7 - (n & 7))) & 1 ? values[k++] * factor : NaN;
    } else {
      if (values.length !== npts) throw new IngestError(where, `${values.length} values for ${npts} grid points and no bitmap`);
      if (factor === 1) for (let n = 0; n < npts; n++) scan[n] = values[n];
      else for (let n = 0; n < npts; n++) scan[n] = values[n] * factor;
    }
    return toCanonical(scan, f.grid);
  }

  /**
   * The common case (simple packing, no bitmap, rows west to east) in one pass: each scan row
   * is unpacked and scaled straight into its canonical row.
   */
  private decodeSimpleRows(f: Grib2Field, payload: Uint8Array, where: string): Float32Array {
    const p = f.packing;
    const { ni, nj } = f.grid;
    if (p.nbits * p.count > (payload.length - PAD) * 8) {
      throw new IngestError(where, `packed data need ${Math.ceil((p.nbits * p.count) / 8)} octets, section 7 holds ${payload.length - PAD}`);
    }
    const out = new Float32Array(ni * nj);
    const jPos = (f.grid.scanMode & 0x40) !== 0;
    const bs = 2 ** p.binaryScale;
    const ds = 10 ** -p.decimalScale * f.param.factor;
    for (let r = 0; r < nj; r++) {
      const j = jPos ? r : nj - 1 - r;
      unpackScaled(payload, r * ni * p.nbits, p.nbits, ni, out, j * ni, p.reference, bs, ds);
    }
    return out;
  }

  private async readBytes(offset: number, length: number, pad = 0): Promise<Uint8Array> {
    const buf = new Uint8Array(length + pad);
    const { bytesRead } = await this.handle.read(buf, 0, length, offset);
    if (bytesRead !== length) throw new IngestError('file', `file shrank: ${bytesRead} of ${length} octets read at ${offset}`);
    return buf;
  }

  async close(): Promise<void> {
    await this.handle.close();
  }
}
