/**
 * The demo NetCDF-4 writer (h5wasm) checked with the netCDF library itself.
 * Reference tool: netCDF ncdump (Debian package netcdf-bin), which reads the file through
 * the netCDF-C library: named dimensions only appear when the HDF5 dimension scales are right.
 * Attribute meanings: standard_name, units, axis (source: the CF Conventions).
 */
import { spawnSync } from 'node:child_process';
import fs from 'node:fs';
import os from 'node:os';
import path from 'node:path';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { writeNetcdf4, type NcFile } from '../../../scripts/demo/netcdf4-writer.ts';

function ncdump(args: string[]): string {
  const r = spawnSync('ncdump', args, { encoding: 'utf8', maxBuffer: 64 * 1024 * 1024 });
  if (r.error) throw new Error(`ncdump is not available (${r.error.message}): apt-get install -y netcdf-bin`);
  if (r.status !== 0) throw new Error(`ncdump ${args.join(' ')} failed: ${r.stderr}`);
  return r.stdout;
}

const nt = 3;
const nm = 2;
const nlev = 4;
const nlat = 5;
const nlon = 6;
const z = Float32Array.from({ length: nt * nm * nlev * nlat * nlon }, (_, i) => 1000 + 12000 * Math.sin(i * 0.013) + i * 0.37);
const tp = Float32Array.from({ length: nt * nm * nlat * nlon }, (_, i) => (i % 7) * 0.125 + i * 1e-3);

const spec: NcFile = {
  dimensions: [
    { name: 'time', values: Float64Array.from([0, 6, 12]), attrs: { standard_name: 'time', units: 'hours since 2026-12-01 00:00:00', axis: 'T' } },
    { name: 'member', values: Int32Array.from([0, 1]), attrs: { standard_name: 'realization' } },
    { name: 'level', values: Float32Array.from([1000, 850, 500, 250]), attrs: { standard_name: 'air_pressure', units: 'hPa', positive: 'down', axis: 'Z' } },
    { name: 'latitude', values: Float32Array.from([62, 61, 60, 59, 58]), attrs: { standard_name: 'latitude', units: 'degrees_north', axis: 'Y' } },
    { name: 'longitude', values: Float32Array.from([-1, 0, 1, 2, 3, 4]), attrs: { standard_name: 'longitude', units: 'degrees_east', axis: 'X' } },
  ],
  variables: [
    { name: 'z', dims: ['time', 'member', 'level', 'latitude', 'longitude'], data: z, chunks: [1, 1, nlev, nlat, nlon],
      attrs: { standard_name: 'geopotential', units: 'm2 s-2' } },
    { name: 'tp', dims: ['time', 'member', 'latitude', 'longitude'], data: tp, deflateLevel: 6,
      attrs: { standard_name: 'precipitation_amount', units: 'kg m-2' } },
  ],
  globalAttrs: { Conventions: 'CF-1.8', title: 'writer test', members: 2, scale: 0.5 },
};

let dir = '';
let file = '';
beforeAll(async () => {
  dir = fs.mkdtempSync(path.join(os.tmpdir(), 'liftwise-'));
  file = path.join(dir, 'ens.nc');
  await writeNetcdf4(file, spec, Date.parse('2026-12-01T00:00:00Z'));
});
afterAll(() => {
  if (dir) fs.rmSync(dir, { recursive: true, force: true });
});

/** The numbers of one variable from `ncdump -v NAME -p 9,17` (full float precision). */
function dumpValues(name: string): number[] {
  const out = ncdump(['-v', name, '-p', '9,17', file]);
  const data = out.slice(out.indexOf('data:'));
  const m = new RegExp(`\\b${name} =([^;]*);`).exec(data);
  if (!m) throw new Error(`no data for ${name} in ncdump output`);
  return m[1].split(',').map((s) => Number(s.trim()));
}

describe('NetCDF-4 writer against ncdump (reference tool: netCDF ncdump)', () => {
  it('ncdump -h sees a netCDF-4 file with the named dimensions and variables', () => {
    const header = ncdump(['-s', '-h', file]);
    expect(header).toMatch(/_Format = "netCDF-4"/);
    for (const [name, size] of [['time', nt], ['member', nm], ['level', nlev], ['latitude', nlat], ['longitude', nlon]] as const) {
      expect(header).toMatch(new RegExp(`\\t${name} = ${size} ;`));
    }
    expect(header).toMatch(/float z\(time, member, level, latitude, longitude\) ;/);
    expect(header).toMatch(/float tp\(time, member, latitude, longitude\) ;/);
    expect(header).toMatch(/double time\(time\) ;/);
    expect(header).toMatch(/int member\(member\) ;/);
  });

  it('CF attributes are text (NC_CHAR), numbers stay numbers', () => {
    const header = ncdump(['-h', file]);
    expect(header).toMatch(/\tz:standard_name = "geopotential" ;/);
    expect(header).toMatch(/\tz:units = "m2 s-2" ;/);
    expect(header).toMatch(/\ttime:units = "hours since 2026-12-01 00:00:00" ;/);
    expect(header).toMatch(/\tlevel:positive = "down" ;/);
    expect(header).toMatch(/\t\t:Conventions = "CF-1.8" ;/);
    expect(header).toMatch(/\t\t:members = 2 ;/);
    expect(header).toMatch(/\t\t:scale = 0.5 ;/);
    expect(header).not.toMatch(/string /);
  });

  it('variables are deflate-compressed in chunks', () => {
    const header = ncdump(['-s', '-h', file]);
    expect(header).toMatch(/z:_DeflateLevel = 4 ;/);
    expect(header).toMatch(/tp:_DeflateLevel = 6 ;/);
    expect(header).toMatch(/z:_ChunkSizes = 1, 1, 4, 5, 6 ;/);
  });

  it('coordinate values read back exactly', () => {
    expect(dumpValues('latitude')).toEqual([62, 61, 60, 59, 58]);
    expect(dumpValues('longitude')).toEqual([-1, 0, 1, 2, 3, 4]);
    expect(dumpValues('level')).toEqual([1000, 850, 500, 250]);
    expect(dumpValues('time')).toEqual([0, 6, 12]);
  });

  it('data read back point by point (float32, so equal to 9 significant digits)', () => {
    for (const [name, data] of [['z', z], ['tp', tp]] as const) {
      const values = dumpValues(name);
      expect(values).toHaveLength(data.length);
      values.forEach((v, i) => expect(Math.abs(v - data[i])).toBeLessThanOrEqual(Math.abs(data[i]) * 1e-8 + 1e-12));
    }
  });

  it('same input and clock give the same bytes', async () => {
    const again = path.join(dir, 'again.nc');
    await writeNetcdf4(again, spec, Date.parse('2026-12-01T00:00:00Z'));
    expect(Buffer.compare(fs.readFileSync(file), fs.readFileSync(again))).toBe(0);
  });

  it('refuses a variable whose size does not match its dimensions', async () => {
    const bad: NcFile = { ...spec, variables: [{ ...spec.variables[1], data: new Float32Array(5) }] };
    await expect(writeNetcdf4(path.join(dir, 'bad.nc'), bad, 0)).rejects.toThrow(/tp has 5 values/);
  });
});
