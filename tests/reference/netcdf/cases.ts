/**
 * Reference datasets for the NetCDF reader and the expected canonical field, computed
 * independently of the reader: each canonical grid point is looked up in the file by its
 * coordinates (latitude, longitude modulo 360, pressure in Pa, step, member) and its stored
 * value is taken from ncdump's print-out (reference tool: netCDF ncdump).
 */
import { expect } from 'vitest';
import { dimLength, ncdumpValues, raw, seeded, type AttrSpec, type DatasetSpec, type VarSpec } from '../../unit/ingest/netcdf/cdl.ts';
import { openRun, type CanonicalVariable, type RunInfo } from '../../../server/ingest/index.ts';

function numeric(a: AttrSpec | undefined, fallback: number): number {
  if (a === undefined) return fallback;
  return typeof a === 'number' ? a : typeof a === 'string' ? Number(a) : parseFloat(a.cdl);
}

export type Role = 'lat' | 'lon' | 'level' | 'time' | 'member';

export interface CaseSpec {
  spec: DatasetSpec;
  roles: Record<string, Role>;
  /** coordinates in file order: degrees, Pa, step hours, member numbers */
  coords: { lat: number[]; lon: number[]; levelPa: number[]; steps: number[]; members: number[] };
  /** canonical name -> file variable and the expected unit conversion (canonical = physical * mul + add) */
  fields: Record<string, { source: string; mul: number; add: number }>;
  expectInfo: Pick<RunInfo, 'referenceTime' | 'steps' | 'members' | 'isEnsemble' | 'model'> & { lat: number[]; lon: number[]; levels: number[] };
}

/**
 * Opens `file` with openRun, checks the run description, then every field of every member and
 * step point by point against ncdump (reference tool: netCDF ncdump). Returns the number of
 * points compared and of missing points, so a test can check that both kinds occurred.
 */
export async function checkCase(c: CaseSpec, file: string): Promise<{ compared: number; missing: number }> {
  const reader = await openRun(file);
  let compared = 0;
  let missing = 0;
  try {
    const { info } = reader;
    expect(info.referenceTime).toBe(c.expectInfo.referenceTime);
    expect(info.steps).toEqual(c.expectInfo.steps);
    expect(info.members).toEqual(c.expectInfo.members);
    expect(info.isEnsemble).toBe(c.expectInfo.isEnsemble);
    expect(info.model).toBe(c.expectInfo.model);
    expect(Array.from(info.axes.lat)).toEqual(c.expectInfo.lat);
    expect(Array.from(info.axes.lon)).toEqual(c.expectInfo.lon);
    expect(Array.from(info.axes.levels)).toEqual(c.expectInfo.levels);
    expect(info.variables.map((x) => x.name).sort()).toEqual(Object.keys(c.fields).sort());
    for (const [name, f] of Object.entries(c.fields)) {
      expect(info.variables.find((x) => x.name === name)?.sourceName).toBe(f.source);
      for (const member of info.members) {
        for (const step of info.steps) {
          const ours = await reader.readField(name as CanonicalVariable, member, step);
          const want = expectedField(c, file, name, info, member, step);
          expect(ours.length).toBe(want.length);
          for (let i = 0; i < want.length; i++) {
            if (Number.isNaN(want[i])) {
              missing++;
              if (!Number.isNaN(ours[i])) expect.fail(`${name} m${member} s${step} point ${i}: expected missing, got ${ours[i]}`);
            } else {
              compared++;
              if (!(Math.abs(ours[i] - want[i]) <= 2e-6 * Math.max(1, Math.abs(want[i])))) {
                expect.fail(`${name} m${member} s${step} point ${i}: ${ours[i]} vs ncdump-derived ${want[i]}`);
              }
            }
          }
        }
      }
    }
  } finally {
    await reader.close();
  }
  return { compared, missing };
}

function fieldValues(shape: number[], rand: () => number, lo: number, hi: number, holes: number, integer: boolean): (number | null)[] {
  const n = shape.reduce((a, b) => a * b, 1);
  return Array.from({ length: n }, () => {
    if (rand() < holes) return null;
    const x = lo + (hi - lo) * rand();
    return integer ? Math.round(x) : x;
  });
}

function dataVar(base: Omit<VarSpec, 'values'>, spec: DatasetSpec, rand: () => number, lo: number, hi: number, holes: number): VarSpec {
  const shape = base.dims.map((d) => dimLength(spec, d));
  const integer = base.type === 'short' || base.type === 'int' || base.type === 'byte';
  return { ...base, values: fieldValues(shape, rand, lo, hi, holes, integer) };
}

/**
 * Classic layout with every orientation trap: latitudes north to south, longitudes 340..20
 * across the Greenwich meridian, levels in hPa top first, geopotential height (gpm) packed as
 * short with scale_factor/add_offset and _FillValue holes, a record (unlimited) time dimension
 * carrying several record variables, an ensemble member dimension, "hours since" time.
 */
export function classicCase(): CaseSpec {
  const rand = seeded(20261201);
  const spec: DatasetSpec = {
    dims: { time: { unlimited: 3 }, member: 2, plev: 5, lat: 4, lon: 5 },
    global: { source: 'Liftwise test model', Conventions: 'CF-1.8' },
    vars: [
      { name: 'time', type: 'double', dims: ['time'], attrs: { units: 'hours since 2026-12-01 00:00:00', standard_name: 'time' }, values: [0, 6, 12] },
      { name: 'member', type: 'int', dims: ['member'], attrs: { standard_name: 'realization' }, values: [0, 1] },
      { name: 'plev', type: 'float', dims: ['plev'], attrs: { units: 'hPa', standard_name: 'air_pressure' }, values: [250, 500, 700, 850, 1000] },
      { name: 'lat', type: 'float', dims: ['lat'], attrs: { units: 'degrees_north' }, values: [60, 55, 50, 45] },
      { name: 'lon', type: 'float', dims: ['lon'], attrs: { units: 'degrees_east' }, values: [340, 350, 0, 10, 20] },
    ],
  };
  const d5 = ['time', 'member', 'plev', 'lat', 'lon'];
  spec.vars.push(
    dataVar({ name: 'gh', type: 'short', dims: d5, attrs: { standard_name: 'geopotential_height', units: 'gpm', scale_factor: raw('0.5f'), add_offset: raw('5000.f'), _FillValue: raw('-32767s') } }, spec, rand, -9000, 20000, 0.06),
    dataVar({ name: 't', type: 'float', dims: d5, attrs: { standard_name: 'air_temperature', units: 'K', _FillValue: raw('1.e20f') } }, spec, rand, 200, 300, 0.05),
    dataVar({ name: 'u', type: 'float', dims: d5, attrs: { standard_name: 'eastward_wind', units: 'm s-1' } }, spec, rand, -40, 60, 0),
    dataVar({ name: 'r', type: 'short', dims: d5, attrs: { standard_name: 'relative_humidity', units: '1', scale_factor: 1e-4, missing_value: raw('-1s') } }, spec, rand, -1, 10000, 0.04),
    dataVar({ name: 'tp', type: 'float', dims: ['time', 'member', 'lat', 'lon'], attrs: { standard_name: 'precipitation_amount', units: 'm' } }, spec, rand, 0, 0.05, 0),
  );
  return {
    spec,
    roles: { time: 'time', member: 'member', plev: 'level', lat: 'lat', lon: 'lon' },
    coords: { lat: [60, 55, 50, 45], lon: [340, 350, 0, 10, 20], levelPa: [25000, 50000, 70000, 85000, 100000], steps: [0, 6, 12], members: [0, 1] },
    fields: {
      z: { source: 'gh', mul: 9.80665, add: 0 },
      t: { source: 't', mul: 1, add: 0 },
      u: { source: 'u', mul: 1, add: 0 },
      r: { source: 'r', mul: 100, add: 0 },
      tp: { source: 'tp', mul: 1000, add: 0 },
    },
    expectInfo: {
      referenceTime: '2026-12-01T00:00:00Z',
      steps: [0, 6, 12],
      members: [0, 1],
      isEnsemble: true,
      model: 'Liftwise test model',
      lat: [45, 50, 55, 60],
      lon: [-20, -10, 0, 10, 20],
      levels: [100000, 85000, 70000, 50000, 25000],
    },
  };
}

/**
 * Permuted dimension orders, a global 0..360 longitude axis (rotated to start at -180),
 * geopotential in m2 s-2, Celsius temperature, cloud cover in %, time in "days since" with a
 * separate forecast_reference_time, levels in Pa found by axis = "Z" only.
 */
export function permutedCase(): CaseSpec {
  const rand = seeded(424242);
  const spec: DatasetSpec = {
    dims: { time: 2, isobaric: 3, lat: 3, lon: 4 },
    global: { institution: 'Liftwise test centre' },
    vars: [
      { name: 'time', type: 'double', dims: ['time'], attrs: { units: 'days since 2026-11-30 12:00:00', calendar: 'gregorian' }, values: [0.5, 0.75] },
      { name: 'reftime', type: 'double', dims: [], attrs: { units: 'hours since 2026-12-01 00:00:00', standard_name: 'forecast_reference_time' }, values: [-6] },
      { name: 'isobaric', type: 'double', dims: ['isobaric'], attrs: { units: 'Pa', axis: 'Z', positive: 'down' }, values: [85000, 50000, 30000] },
      { name: 'lat', type: 'double', dims: ['lat'], attrs: { standard_name: 'latitude', units: 'degrees_north' }, values: [-30, 0, 30] },
      { name: 'lon', type: 'double', dims: ['lon'], attrs: { standard_name: 'longitude', units: 'degrees_east' }, values: [0, 90, 180, 270] },
    ],
  };
  spec.vars.push(
    dataVar({ name: 'z', type: 'float', dims: ['time', 'lon', 'lat', 'isobaric'], attrs: { standard_name: 'geopotential', units: 'm2 s-2' } }, spec, rand, 1000, 100000, 0.12),
    dataVar({ name: 'temp', type: 'double', dims: ['isobaric', 'time', 'lat', 'lon'], attrs: { standard_name: 'air_temperature', units: 'degC', _FillValue: -999.0 } }, spec, rand, -60, 30, 0.12),
    dataVar({ name: 'q', type: 'float', dims: ['time', 'isobaric', 'lat', 'lon'], attrs: { units: 'kg kg-1' } }, spec, rand, 0, 0.02, 0),
    dataVar({ name: 'tcc', type: 'float', dims: ['lat', 'time', 'lon'], attrs: { standard_name: 'cloud_area_fraction', units: '%' } }, spec, rand, 0, 100, 0),
  );
  return {
    spec,
    roles: { time: 'time', isobaric: 'level', lat: 'lat', lon: 'lon' },
    coords: { lat: [-30, 0, 30], lon: [0, 90, 180, 270], levelPa: [85000, 50000, 30000], steps: [6, 12], members: [0] },
    fields: {
      z: { source: 'z', mul: 1, add: 0 },
      t: { source: 'temp', mul: 1, add: 273.15 },
      q: { source: 'q', mul: 1, add: 0 },
      tcc: { source: 'tcc', mul: 0.01, add: 0 },
    },
    expectInfo: {
      referenceTime: '2026-11-30T18:00:00Z',
      steps: [6, 12],
      members: [0],
      isEnsemble: false,
      model: 'Liftwise test centre',
      lat: [-30, 0, 30],
      lon: [-180, -90, 0, 90],
      levels: [85000, 50000, 30000],
    },
  };
}

const dumps = new Map<string, (number | null)[]>();
const sameLon = (a: number, b: number) => Math.abs((((a - b) % 360) + 540) % 360 - 180) < 1e-6;

/**
 * The canonical field expected for `canonical` at (member, step): each canonical point is found
 * in the file by coordinates, its stored value read from ncdump's output, then unpacked with the
 * CF rules (stored * scale_factor + add_offset) and converted with the case's declared factors.
 */
export function expectedField(c: CaseSpec, file: string, canonical: string, info: RunInfo, member: number, step: number): Float64Array {
  const f = c.fields[canonical];
  const v = c.spec.vars.find((x) => x.name === f.source)!;
  const cacheKey = `${file}\0${v.name}`;
  if (!dumps.has(cacheKey)) dumps.set(cacheKey, ncdumpValues(file, v.name));
  const dump = dumps.get(cacheKey)!;
  const scale = numeric(v.attrs?.scale_factor, 1);
  const offset = numeric(v.attrs?.add_offset, 0);
  const shape = v.dims.map((d) => dimLength(c.spec, d));
  // CF: stored values equal to missing_value are missing too (ncdump prints only _FillValue as _)
  const missing = v.attrs?.missing_value;
  const missingValue = missing === undefined ? null : typeof missing === 'number' ? missing : parseFloat((missing as { cdl: string }).cdl);
  const roles = v.dims.map((d) => c.roles[d]);
  const levels = roles.includes('level') ? Array.from(info.axes.levels) : [NaN];
  const nlat = info.axes.lat.length;
  const nlon = info.axes.lon.length;
  const out = new Float64Array(levels.length * nlat * nlon);
  for (let k = 0; k < levels.length; k++) {
    for (let j = 0; j < nlat; j++) {
      for (let i = 0; i < nlon; i++) {
        const at: Record<Role, number> = {
          level: c.coords.levelPa.indexOf(levels[k]),
          lat: c.coords.lat.findIndex((x) => Math.abs(x - info.axes.lat[j]) < 1e-6),
          lon: c.coords.lon.findIndex((x) => sameLon(x, info.axes.lon[i])),
          time: c.coords.steps.indexOf(step),
          member: c.coords.members.indexOf(member),
        };
        let flat = 0;
        roles.forEach((r, d) => (flat = flat * shape[d] + at[r]));
        const stored = dump[flat];
        out[(k * nlat + j) * nlon + i] = stored === null || stored === missingValue ? NaN : (stored * scale + offset) * f.mul + f.add;
      }
    }
  }
  return out;
}
