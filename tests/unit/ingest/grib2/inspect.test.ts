/**
 * The `inspect` command's output formats (documented at the top of
 * server/cli/commands/inspect.ts), run as the desk runs it: `tsx server/cli/liftwise.ts inspect`.
 */
import { spawnSync } from 'node:child_process';
import fs from 'node:fs';
import os from 'node:os';
import path from 'node:path';
import { fileURLToPath } from 'node:url';
import { afterAll, describe, expect, it } from 'vitest';
import { NI, NJ, fieldSections, message, ramp, sec1, sec3, validFile, type BuiltField } from './build.ts';

const root = path.resolve(path.dirname(fileURLToPath(import.meta.url)), '../../../..');
const dir = fs.mkdtempSync(path.join(os.tmpdir(), 'liftwise-'));
afterAll(() => fs.rmSync(dir, { recursive: true, force: true }));

const unknown: BuiltField = { category: 19, number: 0, levelType: 1, levelPa: 0, xs: ramp(9) };
const file = path.join(dir, 'run.grib2');
fs.writeFileSync(file, Uint8Array.from([...validFile(), ...message([sec1(), sec3(), ...fieldSections(unknown)])]));

function inspect(...args: string[]) {
  const r = spawnSync(process.execPath, ['--import', 'tsx', path.join(root, 'server/cli/liftwise.ts'), 'inspect', ...args], { cwd: root, encoding: 'utf8' });
  return { code: r.status, out: r.stdout, err: r.stderr };
}

describe('liftwise inspect', () => {
  it('text summary, one item per line', () => {
    const r = inspect(file);
    expect(r.err).toBe('');
    expect(r.code).toBe(0);
    expect(r.out.split('\n')).toEqual([
      'format: grib2',
      'model: ECMWF',
      'reference time: 2026-12-01T00:00:00Z',
      `grid: ${NJ} x ${NI} (lat x lon)`,
      'latitude: first 54 last 60 step 2',
      'longitude: first -10 last 10 step 4',
      'levels (hPa): 850 500',
      'steps (h): 0',
      'members: 0 (deterministic)',
      'variables:',
      '  z m2 s-2 levels(hPa) 850 source z (0/3/4)',
      '  t K levels(hPa) 850 500 source t (0/0/0)',
      '  tcc 1 surface source tcc (0/6/1, %)',
      'skipped: 1 messages',
      '  message 4: parameter 0/19/0 level type 1: parameter not read',
      '',
    ]);
  }, 30_000);

  it('--json: one object on one line', () => {
    const r = inspect(file, '--json');
    expect(r.code).toBe(0);
    expect(r.out.trim().split('\n')).toHaveLength(1);
    const j = JSON.parse(r.out);
    expect(j.grid).toEqual({ nlat: NJ, nlon: NI, latFirst: 54, latLast: 60, latStep: 2, lonFirst: -10, lonLast: 10, lonStep: 4 });
    expect(j.levelsHpa).toEqual([850, 500]);
    expect(j.variables.map((v: { name: string }) => v.name)).toEqual(['z', 't', 'tcc']);
    expect(j.skipped).toEqual([{ message: 4, parameter: '0/19/0', levelType: 1, reason: 'parameter not read' }]);
    expect(j.isEnsemble).toBe(false);
  }, 30_000);

  it('--dump: "lat lon value" north to south, west to east, nan for missing', () => {
    const r = inspect(file, '--dump', 't:500:0');
    expect(r.code).toBe(0);
    const lines = r.out.trim().split('\n');
    expect(lines).toHaveLength(NI * NJ);
    // the file scans north to south, west to east from 60N 350E: scan order is dump order
    const xs = ramp(2);
    const lons = [-10, -6, -2, 2, 6, 10];
    lines.forEach((line, k) => {
      const lat = 60 - 2 * Math.floor(k / NI);
      const expected = k % 5 === 1 ? 'nan' : String(200 + xs[k]);
      expect(line).toBe(`${lat} ${lons[k % NI]} ${expected}`);
    });
    const tcc = inspect(file, '--dump', 'tcc:0:0').out.trim().split('\n');
    expect(tcc[0]).toBe(`60 -10 ${(200 + (ramp(4)[0] % 100)) / 100}`);
  }, 30_000);

  it('errors: one line on stderr and a non-zero exit code', () => {
    const text = path.join(dir, 'notes.grib2');
    fs.writeFileSync(text, 'not a model run\n');
    const bad = inspect(text);
    expect(bad.code).toBe(1);
    expect(bad.out).toBe('');
    expect(bad.err.trim().split('\n')).toHaveLength(1);
    expect(bad.err).toMatch(/^inspect: file: not a GRIB2, NetCDF-3 or NetCDF-4 file/);
    const level = inspect(file, '--dump', 't:300:0');
    expect(level.code).toBe(1);
    expect(level.err).toMatch(/^inspect: variable t: no level 300 hPa/);
    const usage = inspect(file, '--dump', 'nonsense');
    expect(usage.code).toBe(2);
  }, 30_000);
});
