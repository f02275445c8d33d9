/**
 * Each role's main job in a real browser, against the real app (built client, real database,
 * real queue and workers, the local identity provider).
 */
import fs from 'node:fs';
import os from 'node:os';
import path from 'node:path';
import type { Browser } from 'playwright-core';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { DEFAULT_CONFIG, generateDemo, type Manifest } from '../../scripts/demo/generate.ts';
import { startTestApp, type TestApp } from '../integration/support.ts';
import { launchBrowser, newDesk, screenshot, signInAs } from './browser.ts';

const SMALL = {
  ...DEFAULT_CONFIG,
  deterministicDomain: { latSouth: 50, latNorth: 70, lonWest: -6, lonEast: 30, resolution: 2 },
  ensembleDomain: { latSouth: 50, latNorth: 70, lonWest: -6, lonEast: 30, resolution: 2 },
  steps: [0, 6, 12, 18, 24],
  members: 3,
  seed: `e2e-${process.pid}`,
};

describe('the desk in a real browser', () => {
  let t: TestApp;
  let browser: Browser;
  let closeBrowser: () => Promise<void>;
  let manifest: Manifest;
  const out = fs.mkdtempSync(path.join(os.tmpdir(), 'liftwise-e2e-'));

  beforeAll(async () => {
    ({ manifest } = await generateDemo({ outDir: out, config: SMALL, log: () => {} }));
    t = await startTestApp({ SERVE_CLIENT: 'true' });
    ({ browser, close: closeBrowser } = await launchBrowser());
  }, 120_000);

  afterAll(async () => {
    await closeBrowser?.();
    await t?.close();
    fs.rmSync(out, { recursive: true, force: true });
  });

  it('the meteorologist signs in, uploads a run, watches it reach Ready and opens it', async () => {
    const { context, page, errors } = await newDesk(browser, t.baseUrl);
    await signInAs(page, 'Ilse Varga');
    await page.getByRole('link', { name: 'Runs' }).click();
    await expect.poll(() => page.getByRole('heading', { level: 1, name: 'Runs' }).isVisible()).toBe(true);
    await screenshot(page, 'runs-empty');

    const grib = manifest.files.find((f) => f.format === 'grib2')!;
    await page.getByLabel('Model run file').setInputFiles(path.join(out, grib.path));
    await page.getByText('Received. Reading has started').waitFor({ timeout: 30_000 });
    await page.getByText('Ready', { exact: true }).first().waitFor({ timeout: 60_000 });
    await screenshot(page, 'runs-ready');

    await page.getByRole('link', { name: 'open the run' }).click();
    await page.getByRole('region', { name: 'Run facts' }).waitFor();
    expect(await page.getByText(grib.sha256.slice(0, 16)).isVisible()).toBe(true);
    await screenshot(page, 'run-view');
    expect(errors).toEqual([]);
    await context.close();
  });

  it('a trader sees runs but no upload panel, no Admin, and is refused the Admin screen', async () => {
    const { context, page } = await newDesk(browser, t.baseUrl);
    await signInAs(page, 'Tomas Brekke');
    await page.goto('/runs');
    await page.getByRole('heading', { level: 1, name: 'Runs' }).waitFor();
    expect(await page.getByRole('button', { name: 'Choose file…' }).count()).toBe(0);
    expect(await page.getByRole('navigation', { name: 'Screens' }).getByRole('link', { name: 'Admin' }).count()).toBe(0);
    await page.goto('/admin');
    await page.getByText('Not available with your roles').waitFor();
    await screenshot(page, 'trader-not-allowed');
    await context.close();
  });
});
