/**
 * The generator on a tiny configuration: byte-identical output for the same seed, a manifest
 * that lists every file with its size and sha256, skipping when up to date, and GRIB2 /
 * NetCDF-4 files with the expected structure.
 */
import crypto from 'node:crypto';
import fs from 'node:fs';
import os from 'node:os';
import path from 'node:path';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import h5wasm from 'h5wasm/node';
import { fieldsAt, gridAxes, makeContext } from '../../../scripts/demo/atmosphere.ts';
import { generateDemo, keepSignificantBits, type DemoConfig, type Manifest } from '../../../scripts/demo/generate.ts';
import { CURRENT_CYCLE, memberWaves } from '../../../scripts/demo/runs.ts';

const config: DemoConfig = {
  deterministicDomain: { latSouth: 58, latNorth: 62, lonWest: 4, lonEast: 10, resolution: 1 },
  ensembleDomain: { latSouth: 58, latNorth: 62, lonWest: 4, lonEast: 10, resolution: 2 },
  levelsHpa: [1000, 850, 500, 300],
  steps: [0, 6, 12],
  members: 3,
  seed: 'unit-test',
};

const sha = (file: string) => crypto.createHash('sha256').update(fs.readFileSync(file)).digest('hex');
const quiet = () => {};
let root = '';
let first: Manifest;
let firstDir = '';

beforeAll(async () => {
  root = fs.mkdtempSync(path.join(os.tmpdir(), 'liftwise-'));
  firstDir = path.join(root, 'a');
  first = (await generateDemo({ outDir: firstDir, config, log: quiet })).manifest;
});
afterAll(() => {
  if (root) fs.rmSync(root, { recursive: true, force: true });
});

/** GRIB2 messages in a file, walking the 8-octet total lengths of section 0. */
function gribMessages(file: string): number {
  const buf = fs.readFileSync(file);
  let count = 0;
  let at = 0;
  while (at < buf.length) {
    expect(buf.toString('latin1', at, at + 4)).toBe('GRIB');
    expect(buf[at + 7]).toBe(2);
    const length = Number(buf.readBigUInt64BE(at + 8));
    expect(buf.toString('latin1', at + length - 4, at + length)).toBe('7777');
    at += length;
    count++;
  }
  return count;
}

describe('generateDemo', () => {
  it('the manifest lists every file in the folder with its size and sha256', () => {
    const onDisk = fs.readdirSync(firstDir).filter((f) => f !== 'manifest.json').sort();
    expect(first.files.map((f) => f.path).sort()).toEqual(onDisk);
    for (const f of first.files) {
      expect(f.sha256).toBe(sha(path.join(firstDir, f.path)));
      expect(f.bytes).toBe(fs.statSync(path.join(firstDir, f.path)).size);
    }
    const runs = first.files.filter((f) => f.model);
    expect(runs.map((f) => `${f.model} ${f.cycle} ${f.format}`).sort()).toEqual([
      'NVE 2026-11-30T12:00:00Z netcdf4', 'NVE 2026-12-01T00:00:00Z netcdf4',
      'NVM 2026-11-30T12:00:00Z grib2', 'NVM 2026-12-01T00:00:00Z grib2',
    ]);
    for (const r of runs) expect(r.steps).toEqual(config.steps);
    expect(runs.find((r) => r.model === 'NVE')?.members).toEqual([0, 1, 2]);
    expect(runs.find((r) => r.model === 'NVM')?.members).toEqual([0]);
  });

  it('the same configuration gives byte-identical files', async () => {
    const second = (await generateDemo({ outDir: path.join(root, 'b'), config, log: quiet })).manifest;
    expect(second.files.map((f) => [f.path, f.sha256])).toEqual(first.files.map((f) => [f.path, f.sha256]));
  });

  it('another seed changes the ensemble but not the deterministic run', async () => {
    const other = (await generateDemo({ outDir: path.join(root, 'c'), config: { ...config, seed: 'other' }, log: quiet })).manifest;
    const bySeed = (m: Manifest, p: string) => m.files.find((f) => f.path === p)?.sha256;
    expect(bySeed(other, 'nve-2026120100.nc')).not.toBe(bySeed(first, 'nve-2026120100.nc'));
    expect(bySeed(other, 'nvm-2026120100.grib2')).toBe(bySeed(first, 'nvm-2026120100.grib2'));
  });

  it('skips when the manifest is current, regenerates with force or a changed file', async () => {
    const lines: string[] = [];
    const again = await generateDemo({ outDir: firstDir, config, log: (l) => lines.push(l) });
    expect(again.skipped).toBe(true);
    expect(lines.join('\n')).toMatch(/up to date/);
    fs.truncateSync(path.join(firstDir, 'people.json'), 3);
    expect((await generateDemo({ outDir: firstDir, config, log: quiet })).skipped).toBe(false);
    expect(sha(path.join(firstDir, 'people.json'))).toBe(first.files.find((f) => f.path === 'people.json')?.sha256);
    expect((await generateDemo({ outDir: firstDir, config, log: quiet, force: true })).skipped).toBe(false);
  });

  it('GRIB2 files hold steps x (6 variables x levels + 2 surface fields) messages', () => {
    for (const f of first.files.filter((x) => x.format === 'grib2')) {
      expect(gribMessages(path.join(firstDir, f.path))).toBe(config.steps.length * (6 * config.levelsHpa.length + 2));
    }
  });

  it('NetCDF-4 files are HDF5 files', () => {
    for (const f of first.files.filter((x) => x.format === 'netcdf4')) {
      const head = fs.readFileSync(path.join(firstDir, f.path)).subarray(0, 8);
      expect(Array.from(head)).toEqual([0x89, 0x48, 0x44, 0x46, 0x0d, 0x0a, 0x1a, 0x0a]);
    }
  });

  it('h5wasm (the ingest side) reads the ensemble back: shape, attributes, member 1 values', async () => {
    await h5wasm.ready;
    const file = new h5wasm.File(path.join(firstDir, 'nve-2026120100.nc'), 'r');
    try {
      const z = file.get('z') as InstanceType<typeof h5wasm.Dataset>;
      const axes = gridAxes(config.ensembleDomain);
      const nlev = config.levelsHpa.length;
      expect(z.shape).toEqual([config.steps.length, config.members, nlev, axes.lat.length, axes.lon.length]);
      expect(z.attrs.standard_name.value).toBe('geopotential');
      expect(z.get_attached_scales(1)).toEqual(['/member']);
      const slab = z.slice([[2, 3], [1, 2]]) as Float32Array;
      const ctx = makeContext(config.ensembleDomain, memberWaves(CURRENT_CYCLE, config.members, config.seed)[1]);
      const levelsPa = config.levelsHpa.map((p) => p * 100);
      const want = fieldsAt(ctx, axes, levelsPa, 0, config.steps[2]).z;
      expect(slab.length).toBe(want.length);
      for (let i = 0; i < want.length; i++) expect(Math.abs(slab[i] - want[i])).toBeLessThanOrEqual(Math.abs(want[i]) * 2 ** -18);
    } finally {
      file.close();
    }
  });

  it('regions, people and subscribers are valid JSON', () => {
    const regions = JSON.parse(fs.readFileSync(path.join(firstDir, 'nordvale-regions.geojson'), 'utf8'));
    expect(regions.type).toBe('FeatureCollection');
    expect(JSON.parse(fs.readFileSync(path.join(firstDir, 'people.json'), 'utf8')).length).toBeGreaterThanOrEqual(5);
    expect(JSON.parse(fs.readFileSync(path.join(firstDir, 'subscribers.json'), 'utf8')).length).toBeGreaterThan(0);
  });
});

describe('keepSignificantBits', () => {
  it('rounds to the nearest value with that many significant bits', () => {
    const a = Float32Array.from([1 + 2 ** -10, 1 + 3 * 2 ** -12, -3.14159, 123456.78]);
    keepSignificantBits(a, 11); // 10 explicit mantissa bits: spacing 2^-10 just above 1
    expect(a[0]).toBe(1 + 2 ** -10);
    expect(a[1]).toBe(1 + 2 ** -10); // 0.75 of a step rounds up
    expect(Math.abs(a[2] + 3.14159)).toBeLessThan(2 ** -9);
    expect(Math.abs(a[3] - 123456.78) / 123456.78).toBeLessThan(2 ** -11);
  });
});
