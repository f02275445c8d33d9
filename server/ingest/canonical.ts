/**
 * The canonical pressure-level grid every reader returns (SCIENCE.md section 1).
 *
 * Conventions, fixed here once so that science/ never has to ask where a field came from:
 *  - latitudes ascending, south to north (degrees north);
 *  - longitudes ascending, west to east, contiguous, the first one in [-180, 180) (degrees east);
 *    a domain crossing the antimeridian keeps going past 180 rather than jumping back;
 *  - pressure levels in Pa, sorted bottom (high pressure) to top;
 *  - a 3-D field is one Float32Array indexed [level][lat][lon]: k * nlat * nlon + j * nlon + i;
 *    a surface field is [lat][lon];
 *  - missing values are NaN;
 *  - geopotential is always `z` in m2 s-2: a file carrying geopotential height (gpm) is
 *    converted with g0 = 9.80665 m s-2 (WMO standard gravity) by the reader.
 */

/** Canonical variable names (ecCodes short names, an open convention) and their units. */
export const CANONICAL_VARIABLES = {
  z: { units: 'm2 s-2', description: 'geopotential', kind: 'pressure' },
  t: { units: 'K', description: 'temperature', kind: 'pressure' },
  r: { units: '%', description: 'relative humidity', kind: 'pressure' },
  q: { units: 'kg kg-1', description: 'specific humidity', kind: 'pressure' },
  u: { units: 'm s-1', description: 'eastward wind', kind: 'pressure' },
  v: { units: 'm s-1', description: 'northward wind', kind: 'pressure' },
  w: { units: 'Pa s-1', description: 'pressure vertical velocity (omega)', kind: 'pressure' },
  tp: { units: 'kg m-2', description: 'total precipitation accumulated since the reference time', kind: 'surface' },
  tcc: { units: '1', description: 'total cloud cover (fraction 0 to 1)', kind: 'surface' },
} as const;

export type CanonicalVariable = keyof typeof CANONICAL_VARIABLES;

/** WMO standard gravity, m s-2: converts geopotential height (gpm) to geopotential. */
export const STANDARD_GRAVITY = 9.80665;

export type FileFormat = 'grib2' | 'netcdf3' | 'netcdf4';

export interface GridAxes {
  /** degrees north, ascending */
  lat: Float64Array;
  /** degrees east, ascending and contiguous; first value in [-180, 180) */
  lon: Float64Array;
  /** Pa, descending (bottom to top) */
  levels: Float64Array;
}

export interface VariableInfo {
  name: CanonicalVariable;
  /** the name or parameter the file used, for messages (e.g. "gh", "GRIB2 0/3/5", "HGT") */
  sourceName: string;
  /** pressure levels (Pa) this variable has; empty for surface variables */
  levels: number[];
}

export interface RunInfo {
  format: FileFormat;
  /** model or centre name when the file says it, else null */
  model: string | null;
  /** ISO 8601 UTC, e.g. "2026-12-01T00:00:00Z" */
  referenceTime: string;
  /** forecast steps in hours, ascending */
  steps: number[];
  /** ensemble member numbers, ascending; [0] for a deterministic run (0 is also the control) */
  members: number[];
  /** true when the file declares ensemble members (product template 4.1 / a member dimension) */
  isEnsemble: boolean;
  axes: GridAxes;
  variables: VariableInfo[];
}

export interface RunReader {
  readonly info: RunInfo;
  /**
   * One field for one member and step. Pressure variables: nlev * nlat * nlon over
   * info.axes.levels (levels the variable lacks are NaN); surface variables: nlat * nlon.
   * Decodes only what it needs from the file (message by message, slab by slab).
   */
  readField(name: CanonicalVariable, member: number, step: number): Promise<Float32Array>;
  close(): Promise<void>;
}

/** A reader's refusal: `where` names the section, template, variable or axis at fault. */
export class IngestError extends Error {
  readonly where: string;
  constructor(where: string, message: string) {
    super(`${where}: ${message}`);
    this.name = 'IngestError';
    this.where = where;
  }
}
