/**
 * Run-level behaviour of the GRIB2 reader on hand-built files (build.ts): steps and time units,
 * accumulations, levels missing for a variable, one grid and one run per file.
 */
import fs from 'node:fs';
import os from 'node:os';
import path from 'node:path';
import { afterAll, describe, expect, it } from 'vitest';
import { IngestError } from '../../../../server/ingest/canonical.ts';
import { openGrib2 } from '../../../../server/ingest/grib2/index.ts';
import { NI, NJ, fieldSections, message, ramp, sec1, sec3, type BuiltField } from './build.ts';

const dir = fs.mkdtempSync(path.join(os.tmpdir(), 'liftwise-'));
afterAll(() => fs.rmSync(dir, { recursive: true, force: true }));
let n = 0;
function write(...messages: Uint8Array[]): string {
  const p = path.join(dir, `r${n++}.grib2`);
  fs.writeFileSync(p, Uint8Array.from(messages.flatMap((m) => Array.from(m))));
  return p;
}
const one = (f: BuiltField, hour = 0, ni = NI, centre = 98) => message([sec1(hour, centre), sec3(0, 0, ni), ...fieldSections(f)]);
const t = (levelPa: number, extra: Partial<BuiltField> = {}): BuiltField => ({ category: 0, number: 0, levelType: 100, levelPa, xs: ramp(levelPa / 1000), ...extra });
const tp = (start: number, range: number, seed: number): BuiltField => ({ category: 1, number: 8, levelType: 1, levelPa: 0, xs: ramp(seed), template: 8, forecastHours: start, rangeHours: range });
const plane = NI * NJ;

describe('GRIB2 reader: run structure', () => {
  it('levels a variable lacks are NaN; levels sorted bottom to top', async () => {
    const reader = await openGrib2(write(one(t(50000)), one(t(85000)), one({ ...t(85000), category: 3, number: 5 })));
    expect(Array.from(reader.info.axes.levels)).toEqual([85000, 50000]);
    const z = await reader.readField('z', 0, 0);
    expect(z.subarray(0, plane).every((x) => !Number.isNaN(x))).toBe(true);
    expect(z.subarray(plane).every(Number.isNaN)).toBe(true);
    // gh (0/3/5) is converted to geopotential with g0 = 9.80665 (WMO standard gravity)
    expect(z[(NJ - 1) * NI]).toBeCloseTo((200 + ramp(85)[0]) * 9.80665, 2);
    await reader.close();
  });

  it('forecast times in minutes, hours and days become hours', async () => {
    const reader = await openGrib2(write(one(t(85000, { forecastHours: 90, timeUnit: 0 })), one(t(85000, { forecastHours: 6 })), one(t(85000, { forecastHours: 1, timeUnit: 2 }))));
    expect(reader.info.steps).toEqual([1.5, 6, 24]);
    await reader.close();
    await expect(openGrib2(write(one(t(85000, { forecastHours: 1, timeUnit: 3 }))))).rejects.toThrow(/time unit 3/);
  });

  it('tp accumulations: 0-6 and 6-12 sum to the 0-12 total; a gap is an error', async () => {
    const reader = await openGrib2(write(one(tp(0, 6, 1)), one(tp(6, 6, 2)), one(tp(18, 6, 3))));
    expect(reader.info.steps).toEqual([6, 12, 24]);
    const a = await reader.readField('tp', 0, 6);
    const b = await reader.readField('tp', 0, 12);
    for (let k = 0; k < plane; k++) expect(b[k]).toBeCloseTo(a[k] + 200 + ramp(2)[canonicalToScan(k)], 3);
    await expect(reader.readField('tp', 0, 24)).rejects.toThrow(/no interval ends at 18 h/);
    await reader.close();
  });

  it('a file with two grids is refused, naming both', async () => {
    const wide = t(50000, { xs: Array.from({ length: (NI + 1) * NJ }, (_, k) => k) });
    await expect(openGrib2(write(one(t(85000)), one(wide, 0, NI + 1)))).rejects.toThrow(/message 2 section 3: grid 4x7 .* differs from the grid 4x6/);
  });

  it('two runs in one file, or the same field twice, are refused', async () => {
    await expect(openGrib2(write(one(t(85000)), one(t(50000), 12)))).rejects.toThrow(/reference time 2026-12-01T12:00:00Z differs/);
    await expect(openGrib2(write(one(t(85000)), one(t(85000))))).rejects.toThrow(/duplicate field t/);
  });

  it('centre names from section 1; unknown members and steps are clear errors', async () => {
    const reader = await openGrib2(write(one(t(85000), 0, NI, 7)));
    expect(reader.info.model).toBe('NCEP');
    await expect(reader.readField('t', 5, 0)).rejects.toBeInstanceOf(IngestError);
    await expect(reader.readField('t', 0, 3)).rejects.toThrow(/no field for member 0 at step 3 h/);
    await expect(reader.readField('q', 0, 0)).rejects.toThrow(/variable q: not in this file/);
    await reader.close();
    const other = await openGrib2(write(one(t(85000), 0, NI, 250)));
    expect(other.info.model).toBe('centre 250');
    await other.close();
  });

  it('a file with nothing Liftwise reads says which parameters it found', async () => {
    await expect(openGrib2(write(one({ ...t(85000), category: 19, number: 0 })))).rejects.toThrow(/no field Liftwise reads .*0\/19\/0/);
  });
});

/** build.ts grids scan north to south: canonical row j is scan row NJ-1-j */
function canonicalToScan(k: number): number {
  const j = Math.floor(k / NI);
  return (NJ - 1 - j) * NI + (k % NI);
}
