/**
 * A NetCDF-4 (HDF5-based) writer for CF-convention gridded data, through h5wasm.
 *
 * What makes an HDF5 file a NetCDF-4 file that the netCDF library reads with named
 * dimensions: every dimension is a coordinate dataset turned into an HDF5 dimension scale
 * (CLASS = "DIMENSION_SCALE", NAME = the dimension name), and every variable has those scales
 * attached per axis (DIMENSION_LIST, with REFERENCE_LIST on the scale). Text attributes are
 * written as fixed-length ASCII strings so the netCDF library sees them as NC_CHAR (CF text),
 * not as NC_STRING. Creation order is tracked so variables and attributes keep their order.
 *
 * HDF5 stamps object headers with the wall-clock time; to keep output byte-identical for the
 * same input, the clock h5wasm reads is pinned to `fixedTimeMs` while the file is written.
 */
import h5wasm, { type Dtype, type GuessableDataTypes } from 'h5wasm/node';

export type AttributeValue = string | number | number[] | Float32Array | Float64Array | Int32Array;

export interface NcDimension {
  name: string;
  values: Float32Array | Float64Array | Int32Array;
  attrs: Record<string, AttributeValue>;
}

export interface NcVariable {
  name: string;
  /** dimension names, slowest varying first */
  dims: string[];
  data: Float32Array;
  attrs: Record<string, AttributeValue>;
  /** chunk shape (defaults to one 2-D horizontal slab per chunk) */
  chunks?: number[];
  /** deflate level 0..9 (0 = no compression); default 4 */
  deflateLevel?: number;
}

export interface NcFile {
  dimensions: NcDimension[];
  variables: NcVariable[];
  globalAttrs: Record<string, AttributeValue>;
}

/** The part of h5wasm's File and Dataset this writer uses for attributes. */
interface Attributable {
  create_attribute(name: string, data: GuessableDataTypes, shape?: number[] | null, dtype?: Dtype | null): void;
}

function writeAttribute(t: Attributable, name: string, value: AttributeValue): void {
  if (typeof value === 'string') {
    if (!/^[\x20-\x7e]*$/.test(value)) throw new Error(`NetCDF-4 writer: attribute ${name} must be printable ASCII`);
    // Fixed-length ASCII: NC_CHAR in netCDF. A zero-length string is not a valid HDF5 type.
    t.create_attribute(name, value.length ? value : ' ', null, `A${Math.max(1, value.length)}`);
  } else if (typeof value === 'number') {
    t.create_attribute(name, Number.isInteger(value) ? new Int32Array([value]) : new Float64Array([value]));
  } else if (Array.isArray(value)) {
    t.create_attribute(name, value.every(Number.isInteger) ? Int32Array.from(value) : Float64Array.from(value));
  } else {
    t.create_attribute(name, value);
  }
}

function defaultChunks(shape: number[]): number[] {
  return shape.map((n, i) => (i >= shape.length - 2 ? n : 1));
}

/** Pins Date.now while `fn` runs (HDF5 reads the wall clock for object header timestamps). */
function withFixedClock<T>(fixedTimeMs: number, fn: () => T): T {
  const realNow = Date.now;
  Date.now = () => fixedTimeMs;
  try {
    return fn();
  } finally {
    Date.now = realNow;
  }
}

/**
 * Writes `spec` to `path` as NetCDF-4. Object timestamps are `fixedTimeMs` (e.g. the run's
 * reference time), so the same spec always gives the same bytes.
 */
export async function writeNetcdf4(path: string, spec: NcFile, fixedTimeMs: number): Promise<void> {
  await h5wasm.ready;
  const dimSize = new Map(spec.dimensions.map((d) => [d.name, d.values.length]));
  for (const v of spec.variables) {
    const shape = v.dims.map((d) => {
      const n = dimSize.get(d);
      if (n === undefined) throw new Error(`NetCDF-4 writer: variable ${v.name} uses unknown dimension ${d}`);
      return n;
    });
    const total = shape.reduce((a, b) => a * b, 1);
    if (total !== v.data.length) {
      throw new Error(`NetCDF-4 writer: variable ${v.name} has ${v.data.length} values for shape [${shape.join(', ')}]`);
    }
  }
  withFixedClock(fixedTimeMs, () => {
    // Oldest file format features only: readable by any netCDF-4 / HDF5 1.8+ library.
    const file = new h5wasm.File(path, 'w', { track_order: true, libver: ['earliest', 'v108'] });
    try {
      for (const d of spec.dimensions) {
        const ds = file.create_dataset({ name: d.name, data: d.values, track_order: true });
        ds.make_scale(d.name);
        for (const [k, val] of Object.entries(d.attrs)) writeAttribute(ds, k, val);
      }
      for (const v of spec.variables) {
        const shape = v.dims.map((d) => dimSize.get(d) as number);
        const level = v.deflateLevel ?? 4;
        const ds = file.create_dataset({
          name: v.name,
          data: v.data,
          shape,
          chunks: v.chunks ?? defaultChunks(shape),
          ...(level > 0 ? { compression: 'gzip' as const, compression_opts: level } : {}),
          track_order: true,
        });
        v.dims.forEach((d, axis) => ds.attach_scale(axis, d));
        for (const [k, val] of Object.entries(v.attrs)) writeAttribute(ds, k, val);
      }
      for (const [k, val] of Object.entries(spec.globalAttrs)) writeAttribute(file, k, val);
    } finally {
      file.close();
    }
  });
}
