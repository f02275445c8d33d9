/**
 * The generator's files read by independent tools, compared with the synthetic atmosphere:
 * the deterministic GRIB2 runs through ecCodes (reference tool: ecCodes grib_ls and
 * grib_get_data), the ensemble NetCDF-4 through the netCDF library (reference tool: netCDF
 * ncdump). g0 = 9.80665 m s-2 converts gpm to geopotential (source: WMO standard gravity).
 */
import { spawnSync } from 'node:child_process';
import fs from 'node:fs';
import os from 'node:os';
import path from 'node:path';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { fieldsAt, gridAxes, makeContext, type WaveParameters } from '../../../scripts/demo/atmosphere.ts';
import { generateDemo, type DemoConfig } from '../../../scripts/demo/generate.ts';
import { CURRENT_CYCLE, PREVIOUS_CYCLE, deterministicWave, hoursFromCurrentCycle, memberWaves } from '../../../scripts/demo/runs.ts';

function run(tool: string, args: string[]): string {
  const r = spawnSync(tool, args, { encoding: 'utf8', maxBuffer: 64 * 1024 * 1024 });
  if (r.error) throw new Error(`${tool} is not available (${r.error.message}): apt-get install -y libeccodes-tools netcdf-bin`);
  if (r.status !== 0) throw new Error(`${tool} ${args.join(' ')} failed: ${r.stderr}`);
  return r.stdout;
}

const config: DemoConfig = {
  deterministicDomain: { latSouth: 56, latNorth: 60, lonWest: -2, lonEast: 6, resolution: 0.5 },
  ensembleDomain: { latSouth: 56, latNorth: 60, lonWest: -2, lonEast: 6, resolution: 1 },
  levelsHpa: [1000, 850, 700, 500, 300],
  steps: [0, 6, 12, 18],
  members: 4,
  seed: 'reference-test',
};
const levelsPa = config.levelsHpa.map((p) => p * 100);
let dir = '';

beforeAll(async () => {
  dir = fs.mkdtempSync(path.join(os.tmpdir(), 'liftwise-'));
  await generateDemo({ outDir: dir, config, log: () => {} });
});
afterAll(() => {
  if (dir) fs.rmSync(dir, { recursive: true, force: true });
});

/** Expected fields of one run at step index s, stepping through the earlier steps for precipitation. */
function expected(wave: WaveParameters, domain: DemoConfig['deterministicDomain'], cycle: string, s: number) {
  const ctx = makeContext(domain, wave);
  const axes = gridAxes(domain);
  let earlier: { runHours: number; tp: Float32Array } | undefined;
  let f = fieldsAt(ctx, axes, levelsPa, hoursFromCurrentCycle(cycle), config.steps[0]);
  for (let i = 0; i <= s; i++) {
    f = fieldsAt(ctx, axes, levelsPa, hoursFromCurrentCycle(cycle), config.steps[i], earlier);
    earlier = { runHours: config.steps[i], tp: f.tp };
  }
  return { f, n2: axes.lat.length * axes.lon.length };
}

function gribValues(file: string, where: string): number[] {
  return run('grib_get_data', ['-F', '%.10g', '-w', where, file]).trim().split('\n').slice(1)
    .map((l) => Number(l.trim().split(/\s+/)[2]));
}

describe('deterministic runs through ecCodes (reference tool: ecCodes grib_ls / grib_get_data)', () => {
  it('the current cycle: geopotential, simple packing, every field present', () => {
    const file = path.join(dir, 'nvm-2026120100.grib2');
    const listing = run('grib_ls', ['-p', 'shortName,packingType', file]);
    for (const name of ['z', 't', 'r', 'u', 'v', 'w']) {
      expect(listing.match(new RegExp(`^${name}\\s+grid_simple`, 'gm'))?.length).toBe(config.steps.length * config.levelsHpa.length);
    }
    expect(listing.match(/^tcc\s+grid_simple/gm)?.length).toBe(config.steps.length);
    expect(listing).not.toMatch(/grid_complex/);
  });

  it('the previous cycle: geopotential height (gpm = Phi / g0), complex packing', () => {
    const file = path.join(dir, 'nvm-2026113012.grib2');
    const { f, n2 } = expected(deterministicWave(PREVIOUS_CYCLE), config.deterministicDomain, PREVIOUS_CYCLE, 2);
    const gh = gribValues(file, 'shortName=gh,level=500,step=12,packingType=grid_complex');
    const k = config.levelsHpa.indexOf(500);
    expect(gh).toHaveLength(n2);
    gh.forEach((v, i) => expect(Math.abs(v * 9.80665 - f.z[k * n2 + i])).toBeLessThan(0.06));
    expect(run('grib_ls', ['-w', 'count=1', '-p', 'dataDate,dataTime', file])).toMatch(/20261130\s+1200/);
  });

  it('temperature and accumulated precipitation match the synthetic atmosphere point by point', () => {
    const file = path.join(dir, 'nvm-2026120100.grib2');
    const { f, n2 } = expected(deterministicWave(CURRENT_CYCLE), config.deterministicDomain, CURRENT_CYCLE, 3);
    const k = config.levelsHpa.indexOf(850);
    const t = gribValues(file, 'shortName=t,level=850,step=18');
    t.forEach((v, i) => expect(Math.abs(v - f.t[k * n2 + i])).toBeLessThan(0.006));
    const tp = gribValues(file, 'parameterCategory=1,parameterNumber=8,endStep=18');
    expect(tp).toHaveLength(n2);
    expect(Math.max(...tp)).toBeGreaterThan(0);
    tp.forEach((v, i) => expect(Math.abs(v - f.tp[i])).toBeLessThan(0.006));
  });
});

describe('ensemble runs through the netCDF library (reference tool: netCDF ncdump)', () => {
  const file = () => path.join(dir, 'nve-2026120100.nc');

  it('CF header: dimensions, coordinates and standard names', () => {
    const header = run('ncdump', ['-h', file()]);
    expect(header).toMatch(/\ttime = 4 ;/);
    expect(header).toMatch(/\tmember = 4 ;/);
    expect(header).toMatch(/\tlevel = 5 ;/);
    expect(header).toMatch(/time:units = "hours since 2026-12-01 00:00:00" ;/);
    for (const sn of ['geopotential', 'air_temperature', 'relative_humidity', 'eastward_wind', 'northward_wind',
      'lagrangian_tendency_of_air_pressure', 'precipitation_amount', 'cloud_area_fraction']) {
      expect(header).toContain(`:standard_name = "${sn}" ;`);
    }
  });

  it('member 2 temperature at step 6 matches the synthetic atmosphere point by point', () => {
    const out = run('ncdump', ['-v', 't', '-p', '9,17', file()]);
    const values = /\bt =([^;]*);/.exec(out.slice(out.indexOf('data:')))?.[1].split(',').map((s) => Number(s.trim())) ?? [];
    const wave = memberWaves(CURRENT_CYCLE, config.members, config.seed)[2];
    const { f, n2 } = expected(wave, config.ensembleDomain, CURRENT_CYCLE, 1);
    const nlev = config.levelsHpa.length;
    const offset = (1 * config.members + 2) * nlev * n2;
    expect(values.length).toBe(config.steps.length * config.members * nlev * n2);
    for (let i = 0; i < nlev * n2; i++) {
      // stored with 14 significant bits: relative error below 2^-14
      expect(Math.abs(values[offset + i] - f.t[i])).toBeLessThan(f.t[i] * 2 ** -14);
    }
  });
});
