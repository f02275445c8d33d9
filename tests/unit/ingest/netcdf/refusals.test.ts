/**
 * Files that are valid NetCDF but not usable runs: each is refused with an IngestError that
 * names the variable, axis or dimension at fault (both containers, since the CF interpretation
 * is shared).
 */
import fs from 'node:fs';
import { afterAll, describe, expect, it } from 'vitest';
import { openRun } from '../../../../server/ingest/index.ts';
import { raw, tempDir, writeNetcdf, type DatasetSpec, type NcKind, type VarSpec } from './cdl.ts';
import { smallRun } from './fixtures.ts';
import { expectIngestError, outcome } from './harness.ts';

const dir = tempDir();
afterAll(() => fs.rmSync(dir, { recursive: true, force: true }));

function variable(spec: DatasetSpec, name: string): VarSpec {
  const v = spec.vars.find((x) => x.name === name);
  if (!v) throw new Error(`no ${name} in the spec`);
  return v;
}

/** Renames a dimension and its coordinate variable, dropping the coordinate's attributes. */
function renameDim(spec: DatasetSpec, from: string, to: string, attrs: VarSpec['attrs'] = {}) {
  spec.dims = Object.fromEntries(Object.entries(spec.dims).map(([k, d]) => [k === from ? to : k, d]));
  for (const v of spec.vars) v.dims = v.dims.map((d) => (d === from ? to : d));
  const cv = variable(spec, from);
  cv.name = to;
  cv.attrs = attrs;
}

/** Removes the level dimension: every field keeps the first level only. */
function dropLevels(spec: DatasetSpec) {
  delete spec.dims.level;
  spec.vars = spec.vars.filter((v) => v.name !== 'level');
  for (const v of spec.vars) {
    const k = v.dims.indexOf('level');
    if (k < 0) continue;
    v.dims = v.dims.filter((d) => d !== 'level');
    // keep level 0 of [time][member][level][lat][lon]
    const inner = 3 * 4;
    v.values = v.values!.filter((_, i) => Math.floor(i / inner) % 3 === 0);
  }
}

const cases: [string, () => DatasetSpec, RegExp][] = [
  ['latitude dimension without coordinate metadata', () => {
    const s = smallRun();
    renameDim(s, 'lat', 'row');
    return s;
  }, /variable z: missing geopotential.*variable gh: no latitude\/longitude axis .*dimension row \(length 3\)/],
  ['irregular latitude spacing', () => smallRun({ lat: [50, 45, 38] }), /axis lat: irregular latitude spacing/],
  ['irregular longitude spacing', () => smallRun({ lon: [0, 10, 25, 30] }), /axis lon: irregular longitude spacing/],
  ['2-D latitude/longitude (curvilinear grid)', () => {
    const s = smallRun();
    renameDim(s, 'lat', 'y');
    renameDim(s, 'lon', 'x');
    s.vars = s.vars.filter((v) => v.name !== 'y' && v.name !== 'x');
    s.vars.push(
      { name: 'lat', type: 'float', dims: ['y', 'x'], attrs: { standard_name: 'latitude', units: 'degrees_north' }, values: Array.from({ length: 12 }, (_, i) => 40 + i) },
      { name: 'lon', type: 'float', dims: ['y', 'x'], attrs: { standard_name: 'longitude', units: 'degrees_east' }, values: Array.from({ length: 12 }, (_, i) => i) },
    );
    variable(s, 'gh').attrs!.coordinates = 'lat lon';
    return s;
  }, /variable lat: 2-D latitude\/longitude \(y, x\): curvilinear or rotated grids are not supported/],
  ['rotated-pole coordinates', () => {
    const s = smallRun();
    renameDim(s, 'lat', 'rlat', { standard_name: 'grid_latitude', units: 'degrees' });
    return s;
  }, /axis rlat: standard_name grid_latitude: rotated or projected grids are not supported/],
  ['no pressure axis at all', () => {
    const s = smallRun();
    dropLevels(s);
    return s;
  }, /variable z: missing geopotential.*variable gh: no pressure-level axis among its dimensions \(time, member, lat, lon\)/],
  ['a vertical axis in metres', () => {
    const s = smallRun();
    variable(s, 'level').attrs = { units: 'm', axis: 'Z' };
    return s;
  }, /axis level: the vertical axis has units "m", not pressure/],
  ['no temperature', () => {
    const s = smallRun();
    s.vars = s.vars.filter((v) => v.name !== 't');
    return s;
  }, /variable t: missing temperature/],
  ['temperature in unknown units', () => {
    const s = smallRun();
    variable(s, 't').attrs!.units = 'furlongs';
    return s;
  }, /variable t: units "furlongs" are not understood for temperature/],
  ['time units without a reference date', () => {
    const s = smallRun();
    variable(s, 'time').attrs!.units = 'hours';
    return s;
  }, /variable time: time units "hours" are not/],
  ['a non-Gregorian calendar', () => {
    const s = smallRun();
    variable(s, 'time').attrs!.calendar = '360_day';
    return s;
  }, /calendar "360_day" is not supported/],
  ['temperature on a different latitude axis', () => {
    const s = smallRun();
    s.dims.lat2 = 3;
    s.vars.push({ name: 'lat2', type: 'float', dims: ['lat2'], attrs: { units: 'degrees_north' }, values: [51, 46, 41] });
    variable(s, 't').dims = ['time', 'member', 'level', 'lat2', 'lon'];
    return s;
  }, /variable t: its latitude axis lat2 differs from lat used by gh: all fields must share one grid/],
  ['more than half of the temperature missing (NaN flood)', () => smallRun({ tHoles: 0.7 }), /variable t: \d+% of the values of temperature are missing \(member 0, step 0 h\)/],
];

describe.each(['nc3', 'nc4'] as NcKind[])('refusals (%s)', (kind) => {
  it.each(cases)('%s', async (label, build, pattern) => {
    const file = writeNetcdf(build(), dir, label.replace(/\W+/g, '-'), kind);
    await expectIngestError(file, pattern);
  });

  it('the unmodified run reads (control for the cases above)', async () => {
    const o = await outcome(writeNetcdf(smallRun(), dir, 'control', kind));
    expect(o.kind).toBe('ok');
  });

  it('a step or member not in the file is refused by readField', async () => {
    const reader = await openRun(writeNetcdf(smallRun(), dir, 'steps', kind));
    try {
      expect(reader.info.steps).toEqual([0, 12]);
      await expect(reader.readField('t', 0, 6)).rejects.toThrow(/step 6 h is not in the file/);
      await expect(reader.readField('t', 5, 0)).rejects.toThrow(/member 5 is not in the file/);
      await expect(reader.readField('tp', 0, 0)).rejects.toThrow(/variable tp: not in this file/);
    } finally {
      await reader.close();
    }
  });

  it('packed short geopotential height with _FillValue holes reads as NaN there', async () => {
    const s = smallRun();
    const gh = variable(s, 'gh');
    gh.attrs!._FillValue = raw('-32767s');
    gh.values![0] = null;
    const reader = await openRun(writeNetcdf(s, dir, 'holes', kind));
    try {
      const z = await reader.readField('z', 0, 0);
      // file point [t0][m0][level 500 hPa][lat 50][lon 350] is canonical [top level][last lat][first lon]
      const nlat = 3;
      const nlon = 4;
      expect(Number.isNaN(z[(2 * nlat + 2) * nlon + 0])).toBe(true);
      expect(z.filter(Number.isNaN).length).toBe(1);
    } finally {
      await reader.close();
    }
  });
});
