/**
 * The .xlsx export read back two ways: with exceljs (values, number formats, frozen header,
 * autofilter, the About sheet with the cautions and provenance) and converted to CSV by LibreOffice
 * (reference tool: LibreOffice Calc headless, Debian's libreoffice-calc), which must give the same
 * numbers as the API's rows.
 */
import { spawnSync } from 'node:child_process';
import fs from 'node:fs';
import os from 'node:os';
import path from 'node:path';
import ExcelJS from 'exceljs';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { CAUTIONS } from '@shared/cautions.ts';
import type { ScenarioPage } from '@shared/api/scenarios.ts';
import { seedScenarioFixture, type Fixture } from './scenarios-fixture.ts';
import { signIn, startTestApp, type Client, type TestApp } from './support.ts';

let t: TestApp;
let f: Fixture;
let trader: Client;
let workDir: string;
let xlsxBytes: Buffer;
let apiRows: ScenarioPage['rows'];

const NUMBER_KEYS = ['member', 'precipMm', 'anomalyMm', 'snowShare', 'cloudPct', 'ghiKwhM2', 'solarGwh', 'inflowGwh', 'hoursCovered', 'weightPct'] as const;
// columns of the Scenarios sheet (scenario-export.ts EXPORT_COLUMNS): numbers start at column 8
const FIRST_NUMBER_COLUMN = 8;
// the displayed decimals of each number column, as LibreOffice writes them "as shown"
const SHOWN_DIGITS = [0, 1, 1, 2, 0, 2, 3, 3, 0, 2];

beforeAll(async () => {
  t = await startTestApp({}, { workers: false });
  f = await seedScenarioFixture(t.db.db);
  trader = await signIn(t, 'trader');
  workDir = fs.mkdtempSync(path.join(os.tmpdir(), 'liftwise-'));
  const query = `regions=${f.regionH},${f.regionS}&sort=precipMm&dir=desc`;
  const res = await trader.fetch(`/api/scenarios/export.xlsx?${query}`);
  expect(res.status).toBe(200);
  expect(res.headers.get('content-disposition')).toMatch(/attachment; filename="liftwise-scenarios-\d+Z\.xlsx"/);
  xlsxBytes = Buffer.from(await res.arrayBuffer());
  apiRows = ((await (await trader.fetch(`/api/scenarios?${query}&limit=1000`)).json()) as ScenarioPage).rows;
});
afterAll(async () => {
  await t?.close();
  if (workDir) fs.rmSync(workDir, { recursive: true, force: true });
});

describe('xlsx export read back with exceljs', () => {
  it('has the three sheets, the same rows and numbers as the API, a frozen header and an autofilter', async () => {
    const wb = new ExcelJS.Workbook();
    await wb.xlsx.load(xlsxBytes as unknown as ArrayBuffer);
    expect(wb.worksheets.map((w) => w.name)).toEqual(['Scenarios', 'Summary', 'About']);
    const sheet = wb.getWorksheet('Scenarios')!;
    expect(sheet.views[0]).toMatchObject({ state: 'frozen', ySplit: 1 });
    expect(sheet.autoFilter).toBeTruthy();
    expect(JSON.stringify(sheet.autoFilter)).toMatch(/A1.*Q1/);
    expect(sheet.getRow(1).getCell(9).value).toBe('Precipitation (mm)');
    expect(sheet.rowCount).toBe(1 + apiRows.length);
    expect(apiRows.length).toBe(16);
    apiRows.forEach((row, i) => {
      const cells = sheet.getRow(i + 2);
      expect(cells.getCell(1).value).toBe(row.regionId);
      expect(cells.getCell(4).value).toBe(row.day);
      expect(cells.getCell(7).value).toBe(row.runId);
      NUMBER_KEYS.forEach((key, k) => {
        const value = cells.getCell(FIRST_NUMBER_COLUMN + k).value;
        expect(value ?? null, `${key} of row ${i}`).toEqual(row[key]);
      });
    });
    expect(sheet.getRow(2).getCell(9).numFmt).toBe('0.0');
    const summary = wb.getWorksheet('Summary')!;
    expect(summary.views[0]).toMatchObject({ state: 'frozen', ySplit: 1 });
    expect(summary.rowCount).toBe(1 + 4); // 2 regions x 2 days
  });

  it('the About sheet names the filters, runs, input checksums, calibration set, code version, user and the cautions', async () => {
    const wb = new ExcelJS.Workbook();
    await wb.xlsx.load(xlsxBytes as unknown as ArrayBuffer);
    const about = wb.getWorksheet('About')!;
    const text: string[] = [];
    about.eachRow((row) => text.push(`${row.getCell(1).value ?? ''}\t${row.getCell(2).value ?? ''}`));
    const all = text.join('\n');
    for (const caution of CAUTIONS) expect(all).toContain(caution);
    expect(all).toContain(f.runE1);
    expect(all).toContain(f.runD1);
    expect(all).toContain(f.checksums.E1);
    expect(all).toContain(f.checksums.D1);
    expect(all).toContain(`calibration set v${f.calibrationVersion}`);
    expect(all).toContain(`0.1.0+test${f.tag}`);
    expect(all).toContain('Tomas Brekke');
    expect(all).toContain(f.regionH);
  });
});

describe('xlsx export converted by LibreOffice (reference tool: soffice --headless --convert-to csv)', () => {
  it('gives the same numbers as the API rows, at the decimals the sheet shows', () => {
    const hasSoffice = spawnSync('soffice', ['--version'], { encoding: 'utf8' });
    if (hasSoffice.error) throw new Error('reference tool LibreOffice missing: apt-get install -y --no-install-recommends libreoffice-calc');
    const file = path.join(workDir, 'export.xlsx');
    fs.writeFileSync(file, xlsxBytes);
    const profile = `file://${path.join(workDir, 'lo-profile')}`;
    const run = spawnSync('soffice', [`-env:UserInstallation=${profile}`, '--headless', '--convert-to', 'csv', '--outdir', workDir, file], {
      encoding: 'utf8',
      timeout: 90_000,
    });
    expect(run.status, run.stderr).toBe(0);
    const lines = fs.readFileSync(path.join(workDir, 'export.csv'), 'utf8').trim().split(/\r?\n/);
    expect(lines[0].split(',')[8]).toBe('Precipitation (mm)');
    expect(lines).toHaveLength(1 + apiRows.length);
    apiRows.forEach((row, i) => {
      const fields = lines[i + 1].split(',');
      expect(fields[0]).toBe(row.regionId);
      expect(fields[6]).toBe(row.runId);
      NUMBER_KEYS.forEach((key, k) => {
        const shown = fields[FIRST_NUMBER_COLUMN - 1 + k];
        const expected = row[key];
        if (expected === null) expect(shown, `${key} of row ${i}`).toBe('');
        else expect(Number(shown), `${key} of row ${i}`).toBeCloseTo(expected, SHOWN_DIGITS[k] - 1 >= 0 ? SHOWN_DIGITS[k] : 0);
      });
    });
  });
});
