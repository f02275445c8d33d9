/**
 * The trader on Scenarios in a real browser: rows from a small synthetic ensemble processed by the
 * real chain (regions loaded before the upload, so the signals are derived), the filter bar, the
 * pinned weighted P10/P50/P90 rows, and the .xlsx export read back with exceljs.
 */
import fs from 'node:fs';
import os from 'node:os';
import path from 'node:path';
import ExcelJS from 'exceljs';
import type { Browser } from 'playwright-core';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { CAUTIONS } from '@shared/cautions.ts';
import { startTestApp, type TestApp } from '../integration/support.ts';
import { launchBrowser, newDesk, screenshot, signInAs } from './browser.ts';
import { processedEnsemble, putRegions } from './seed.ts';

describe('Scenarios: filter, pinned percentiles, export', () => {
  let t: TestApp;
  let browser: Browser;
  let closeBrowser: () => Promise<void>;
  let model: string;
  let regionCount: { hydro: number; solar: number };
  const out = fs.mkdtempSync(path.join(os.tmpdir(), 'liftwise-e2e-scen-'));

  beforeAll(async () => {
    t = await startTestApp({ SERVE_CLIENT: 'true' }, { mail: {} });
    const regions = await putRegions(t);
    regionCount = {
      hydro: regions.features.filter((f) => f.properties.kind === 'hydro').length,
      solar: regions.features.filter((f) => f.properties.kind === 'solar').length,
    };
    ({ model } = await processedEnsemble(t, out, `e2e-scenarios-${process.pid}`));
    ({ browser, close: closeBrowser } = await launchBrowser());
  }, 150_000);

  afterAll(async () => {
    await closeBrowser?.();
    await t?.close();
    fs.rmSync(out, { recursive: true, force: true });
  });

  it('the trader filters to solar zones, sees the pinned P10/P50/P90 rows and exports the workbook', async () => {
    const { context, page, errors } = await newDesk(browser, t.baseUrl);
    await signInAs(page, 'Tomas Brekke');
    await page.getByRole('navigation', { name: 'Screens' }).getByRole('link', { name: 'Scenarios' }).click();
    await page.getByRole('heading', { level: 1, name: 'Scenarios' }).waitFor();
    const total = page.getByText(/ rows · weights:/);
    await total.waitFor({ timeout: 20_000 });
    const rowsOf = async () => Number(/([\d,]+) rows/.exec((await total.textContent())!)![1]!.replace(/,/g, ''));
    await expect.poll(rowsOf).toBeGreaterThan(0);
    const all = await rowsOf();

    await page.getByLabel('Model').fill(model);
    await page.getByLabel('Kind').selectOption('solar');
    await page.getByRole('button', { name: 'Apply' }).click();
    await page.waitForURL(/kind=solar/);
    await expect.poll(rowsOf).toBeLessThan(all);
    const solar = await rowsOf();
    expect(solar).toBeGreaterThan(0);
    // Solar rows are a share of all rows in proportion to the solar zones (same members and days).
    expect(solar / all).toBeCloseTo(regionCount.solar / (regionCount.hydro + regionCount.solar), 5);
    const grid = page.locator('.ag-root');
    await grid.getByText('Weighted P10', { exact: true }).waitFor();
    expect(await grid.getByText('Weighted P50', { exact: true }).isVisible()).toBe(true);
    expect(await grid.getByText('Weighted P90', { exact: true }).isVisible()).toBe(true);
    // Every scenario row on screen is a solar zone (the pinned rows have no kind).
    const kinds = grid.locator('[role="gridcell"][col-id="kind"]');
    await expect.poll(async () => (await kinds.allTextContents()).filter(Boolean).length).toBeGreaterThan(0);
    expect(new Set((await kinds.allTextContents()).filter(Boolean))).toEqual(new Set(['solar']));
    await screenshot(page, 'scenarios');

    const [download] = await Promise.all([page.waitForEvent('download'), page.getByRole('link', { name: 'Export .xlsx' }).click()]);
    const saved = path.join(out, download.suggestedFilename() || 'scenarios.xlsx');
    await download.saveAs(saved);
    expect(saved.endsWith('.xlsx')).toBe(true);
    const wb = new ExcelJS.Workbook();
    await wb.xlsx.readFile(saved);
    expect(wb.worksheets.map((s) => s.name)).toEqual(expect.arrayContaining(['Scenarios', 'Summary', 'About']));
    // The export follows the filter: the data rows (below the header) are the solar rows on screen.
    expect(wb.getWorksheet('Scenarios')!.actualRowCount - 1).toBe(solar);
    const about: string[] = [];
    wb.getWorksheet('About')!.eachRow((row) => row.eachCell((cell) => about.push(String(cell.value))));
    expect(about.join('\n')).toContain(CAUTIONS[0]);
    expect(errors).toEqual([]);
    await context.close();
  });
});
