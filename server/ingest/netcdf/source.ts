/**
 * What the CF interpretation needs from a NetCDF file, whichever container holds it
 * (classic NetCDF-3 or NetCDF-4/HDF5): named dimensions, variables with attributes and
 * shapes, and a hyperslab reader. Both readers implement this; cf-reader.ts reads it.
 */

/** A text attribute, or a numeric one as plain numbers (64-bit integers converted). */
export type AttrValue = string | number[];

export type NumericArray =
  | Int8Array
  | Uint8Array
  | Int16Array
  | Uint16Array
  | Int32Array
  | Uint32Array
  | Float32Array
  | Float64Array
  | BigInt64Array
  | BigUint64Array;

/** Storage type, named as in the NetCDF data model. */
export type NcType =
  | 'byte'
  | 'ubyte'
  | 'char'
  | 'short'
  | 'ushort'
  | 'int'
  | 'uint'
  | 'int64'
  | 'uint64'
  | 'float'
  | 'double'
  | 'string'
  | 'other';

export interface NcVariable {
  name: string;
  /** dimension names, slowest varying first */
  dims: string[];
  /** current lengths (the record dimension's length is the number of records) */
  shape: number[];
  type: NcType;
  attrs: Map<string, AttrValue>;
}

export interface NcSource {
  readonly format: 'netcdf3' | 'netcdf4';
  /** dimension name -> length */
  readonly dims: Map<string, number>;
  readonly attrs: Map<string, AttrValue>;
  readonly variables: Map<string, NcVariable>;
  /**
   * Reads the hyperslab start..start+count (per dimension) in the file's own dimension order,
   * row-major, unconverted (packed values, fill values as stored).
   */
  read(variable: NcVariable, start: number[], count: number[]): Promise<NumericArray>;
  close(): Promise<void>;
}

export function textAttr(attrs: Map<string, AttrValue>, name: string): string | null {
  const value = attrs.get(name);
  return typeof value === 'string' ? value.replace(/\0+$/, '').trim() : null;
}

export function numberAttr(attrs: Map<string, AttrValue>, name: string): number[] | null {
  const value = attrs.get(name);
  return Array.isArray(value) && value.length > 0 ? value : null;
}
