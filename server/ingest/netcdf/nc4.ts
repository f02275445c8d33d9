/**
 * NetCDF-4 (HDF5 container) reader through h5wasm. The node build of h5wasm reaches the host
 * file system directly (Emscripten NODERAWFS), so a file opens by its path and HDF5 reads only
 * the chunks a hyperslab touches: a field is read slab by slab, never the whole variable.
 *
 * NetCDF-4 keeps dimensions as HDF5 dimension scales: a variable's dimensions are the scales
 * attached to its axes; a dimension without a coordinate variable is a scale dataset whose NAME
 * attribute says "This is a netCDF dimension but not a netCDF variable".
 */
import { resolve } from 'node:path';
import type { Dataset, File as H5File } from 'h5wasm/node';
import { IngestError } from '../canonical.ts';
import type { AttrValue, NcSource, NcType, NcVariable, NumericArray } from './source.ts';
import type H5Module from 'h5wasm/node';

const WHERE = 'NetCDF-4';
const NOT_A_VARIABLE = 'This is a netCDF dimension but not a netCDF variable';
/** HDF5 / netCDF bookkeeping attributes, not CF metadata */
const INTERNAL_ATTRS = new Set(['DIMENSION_LIST', 'REFERENCE_LIST', 'CLASS', 'NAME', '_Netcdf4Coordinates', '_Netcdf4Dimid', '_NCProperties', '_nc3_strict', '_SuperblockVersion', '_IsNetcdf4']);
const NON_COORD_PREFIX = '_nc4_non_coord_';
/** A single field larger than this is not a pressure-level model field. */
const MAX_SLAB_BYTES = 1 << 30;

type H5 = typeof H5Module;
let loading: Promise<H5> | null = null;
let h5wasm: H5;

/**
 * Loads the wasm module once, on the first NetCDF-4 file (importing it costs tens of MB, and
 * several hundred MB when run through tsx), and makes HDF5 errors throw: by default they print
 * to stderr and the call returns an invalid id.
 */
function h5Ready(): Promise<H5> {
  loading ??= import('h5wasm/node').then(async ({ default: lib }) => {
    const module = await lib.ready;
    module.activate_throwing_error_handler();
    h5wasm = lib;
    return lib;
  });
  return loading;
}

interface Nc4Variable extends NcVariable {
  path: string;
}

function hdf5Message(e: unknown): string {
  const text = e instanceof Error ? e.message : String(e);
  // HDF5 error stacks are long; their last "minor:" line says what went wrong.
  const minors = [...text.matchAll(/minor: (.*)/g)].map((m) => m[1].trim());
  return minors.length > 0 ? minors[minors.length - 1] : text.split('\n')[0].slice(0, 200);
}

function typeOf(ds: Dataset): NcType {
  const m = ds.metadata;
  // h5wasm type classes: 0 integer, 1 float, 3 string
  if (m.type === 1) return m.size === 8 ? 'double' : 'float';
  if (m.type === 0) {
    const names: Record<number, [NcType, NcType]> = { 1: ['byte', 'ubyte'], 2: ['short', 'ushort'], 4: ['int', 'uint'], 8: ['int64', 'uint64'] };
    const pair = names[m.size];
    return pair ? (m.signed ? pair[0] : pair[1]) : 'other';
  }
  return m.type === 3 ? 'string' : 'other';
}

function attrValue(value: unknown): AttrValue | null {
  if (typeof value === 'string') return value;
  if (typeof value === 'number') return [value];
  if (typeof value === 'bigint') return [Number(value)];
  if (ArrayBuffer.isView(value)) return Array.from(value as unknown as ArrayLike<number | bigint>, Number);
  if (Array.isArray(value) && value.every((x) => typeof x === 'string')) return value.join('');
  if (Array.isArray(value) && value.every((x) => typeof x === 'number')) return value as number[];
  return null;
}

function readAttrs(owner: { attrs: Record<string, { value: unknown }> }): Map<string, AttrValue> {
  const out = new Map<string, AttrValue>();
  for (const [name, attr] of Object.entries(owner.attrs)) {
    if (INTERNAL_ATTRS.has(name)) continue;
    let value: AttrValue | null = null;
    try {
      value = attrValue(attr.value);
    } catch {
      value = null; // an attribute of a type CF does not use (compound, reference): skip it
    }
    if (value !== null) out.set(name, value);
  }
  return out;
}

export class Nc4Source implements NcSource {
  readonly format = 'netcdf4' as const;
  readonly dims = new Map<string, number>();
  readonly attrs: Map<string, AttrValue>;
  readonly variables = new Map<string, NcVariable>();

  private constructor(private readonly file: H5File) {
    this.attrs = readAttrs(file);
    for (const key of file.keys()) {
      const entity = file.get(key);
      if (!(entity instanceof h5wasm.Dataset)) continue;
      const shape = entity.shape;
      if (shape === null) continue;
      const attrNames = Object.keys(entity.attrs);
      const isScale = attrNames.includes('CLASS') && String(entity.attrs.CLASS.value).startsWith('DIMENSION_SCALE');
      if (isScale && shape.length === 1) this.dims.set(key, shape[0]);
      if (isScale && String(entity.attrs.NAME?.value ?? '').startsWith(NOT_A_VARIABLE)) continue;
      const dims = shape.map((length, axis) => {
        const scales = attrNames.includes('DIMENSION_LIST') ? safeScales(entity, axis) : [];
        const name = scales.length > 0 ? scales[0].replace(/^.*\//, '') : isScale && shape.length === 1 ? key : `phony_dim_${axis}_${length}`;
        if (!this.dims.has(name)) this.dims.set(name, length);
        return name;
      });
      const name = key.startsWith(NON_COORD_PREFIX) ? key.slice(NON_COORD_PREFIX.length) : key;
      const variable: Nc4Variable = { name, path: `/${key}`, dims, shape, type: typeOf(entity), attrs: readAttrs(entity) };
      this.variables.set(name, variable);
    }
  }

  static async open(path: string): Promise<Nc4Source> {
    await h5Ready();
    let file: H5File;
    try {
      file = new h5wasm.File(resolve(path), 'r');
    } catch (e) {
      throw new IngestError(WHERE, `HDF5 cannot open the file (${hdf5Message(e)}); it may be truncated or damaged`);
    }
    if (typeof file.file_id !== 'bigint' || file.file_id < 0n) throw new IngestError(WHERE, 'HDF5 cannot open the file');
    try {
      return new Nc4Source(file);
    } catch (e) {
      file.close();
      if (e instanceof IngestError) throw e;
      throw new IngestError(WHERE, `cannot read the file's structure (${hdf5Message(e)}); it may be truncated or damaged`);
    }
  }

  async read(variable: NcVariable, start: number[], count: number[]): Promise<NumericArray> {
    const v = variable as Nc4Variable;
    const where = `variable ${v.name}`;
    if (start.length !== v.shape.length || count.length !== v.shape.length) throw new IngestError(where, 'slab rank does not match the variable');
    for (let d = 0; d < v.shape.length; d++) {
      if (start[d] < 0 || count[d] < 1 || start[d] + count[d] > v.shape[d]) {
        throw new IngestError(where, `slab ${start[d]}+${count[d]} is outside dimension ${v.dims[d]} (length ${v.shape[d]})`);
      }
    }
    try {
      const ds = this.file.get(v.path.slice(1));
      if (!(ds instanceof h5wasm.Dataset)) throw new IngestError(where, 'the dataset has disappeared');
      const bytes = count.reduce((a, b) => a * b, 1) * ds.metadata.size;
      if (bytes > MAX_SLAB_BYTES) throw new IngestError(where, `a slab of ${bytes} bytes is too large for one field (dimensions ${v.dims.join(' x ')} = ${v.shape.join(' x ')})`);
      const data = v.shape.length === 0 ? ds.value : ds.slice(start.map((s, d) => [s, s + count[d]]));
      if (typeof data === 'number') return new Float64Array([data]);
      if (typeof data === 'bigint') return new Float64Array([Number(data)]);
      if (!ArrayBuffer.isView(data)) throw new IngestError(where, `type ${v.type} is not numeric`);
      return data as NumericArray;
    } catch (e) {
      if (e instanceof IngestError) throw e;
      throw new IngestError(where, `HDF5 cannot read the data (${hdf5Message(e)}); the file may be truncated or damaged`);
    }
  }

  async close(): Promise<void> {
    try {
      this.file.close();
    } catch {
      // closing a damaged file can fail; nothing is left to release on our side
    }
  }
}

function safeScales(ds: Dataset, axis: number): string[] {
  try {
    return ds.get_attached_scales(axis);
  } catch {
    return [];
  }
}
