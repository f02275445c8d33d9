/** Test helper: a small valid pressure-level run, to be damaged or varied by the unit tests. */
import { raw, seeded, type DatasetSpec, type VarSpec } from './cdl.ts';

export interface SmallRunOptions {
  lat?: number[];
  lon?: number[];
  levels?: number[];
  /** fraction of t values written as fill */
  tHoles?: number;
}

export function smallRun(o: SmallRunOptions = {}): DatasetSpec {
  const lat = o.lat ?? [50, 45, 40];
  const lon = o.lon ?? [350, 0, 10, 20];
  const levels = o.levels ?? [500, 850, 1000];
  const rand = seeded(7);
  const n = 2 * 2 * levels.length * lat.length * lon.length;
  const field = (lo: number, hi: number, holes = 0) => Array.from({ length: n }, () => (rand() < holes ? null : lo + (hi - lo) * rand()));
  const d5 = ['time', 'member', 'level', 'lat', 'lon'];
  const vars: VarSpec[] = [
    { name: 'time', type: 'double', dims: ['time'], attrs: { units: 'hours since 2026-12-01 00:00', standard_name: 'time' }, values: [0, 12] },
    { name: 'member', type: 'int', dims: ['member'], values: [0, 1] },
    { name: 'level', type: 'float', dims: ['level'], attrs: { units: 'hPa' }, values: levels },
    { name: 'lat', type: 'float', dims: ['lat'], attrs: { units: 'degrees_north' }, values: lat },
    { name: 'lon', type: 'float', dims: ['lon'], attrs: { units: 'degrees_east' }, values: lon },
    { name: 'gh', type: 'short', dims: d5, attrs: { units: 'gpm', scale_factor: raw('0.5f'), add_offset: raw('5000.f') }, values: field(-9000, 9000).map((x) => (x === null ? null : Math.round(x))) },
    { name: 't', type: 'float', dims: d5, attrs: { units: 'K', _FillValue: raw('-999.f') }, values: field(200, 300, o.tHoles ?? 0) },
    { name: 'u', type: 'double', dims: d5, attrs: { units: 'm s-1' }, values: field(-30, 30) },
  ];
  return { dims: { time: { unlimited: 2 }, member: 2, level: levels.length, lat: lat.length, lon: lon.length }, vars, global: { source: 'unit test' } };
}

const SIZE = { byte: 1, short: 2, int: 4, float: 4, double: 8 } as const;
const pad4 = (n: number) => Math.ceil(n / 4) * 4;

/**
 * Header length of a classic file written from `spec`: the file size less the data, counted
 * from the spec (each variable padded to 4 bytes; record variables once per record).
 */
export function classicHeaderLength(spec: DatasetSpec, fileSize: number): number {
  let data = 0;
  for (const v of spec.vars) {
    const unlimited = v.dims.length > 0 && typeof spec.dims[v.dims[0]] !== 'number';
    const inner = v.dims.slice(unlimited ? 1 : 0).reduce((a, d) => {
      const x = spec.dims[d];
      return a * (typeof x === 'number' ? x : x.unlimited);
    }, 1);
    const records = unlimited ? (spec.dims[v.dims[0]] as { unlimited: number }).unlimited : 1;
    data += pad4(inner * SIZE[v.type]) * records;
  }
  return fileSize - data;
}
