/**
 * The admin uploads a regions file with one bad feature in a real browser: the per-feature
 * message is shown and the active regions stay as they were.
 */
import fs from 'node:fs';
import os from 'node:os';
import path from 'node:path';
import type { Browser } from 'playwright-core';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { signIn, startTestApp, type TestApp } from '../integration/support.ts';
import { launchBrowser, newDesk, screenshot, signInAs } from './browser.ts';

const EXAMPLE = path.resolve(import.meta.dirname, '..', '..', 'docs', 'regions-example.geojson');

describe('Admin: a regions file with an error', () => {
  let t: TestApp;
  let browser: Browser;
  let closeBrowser: () => Promise<void>;
  const out = fs.mkdtempSync(path.join(os.tmpdir(), 'liftwise-e2e-admin-'));

  beforeAll(async () => {
    t = await startTestApp({ SERVE_CLIENT: 'true' }, { mail: {} });
    ({ browser, close: closeBrowser } = await launchBrowser());
  }, 120_000);

  afterAll(async () => {
    await closeBrowser?.();
    await t?.close();
    fs.rmSync(out, { recursive: true, force: true });
  });

  it('shows the per-feature message and changes nothing', async () => {
    const admin = await signIn(t, 'admin');
    const good = JSON.parse(fs.readFileSync(EXAMPLE, 'utf8')) as { features: { properties: Record<string, unknown> }[] };
    const put = await admin.fetch('/api/regions', { method: 'PUT', headers: { 'content-type': 'application/json' }, body: JSON.stringify(good) });
    expect(put.status).toBe(200);
    const before = await (await admin.fetch('/api/regions')).json();

    const bad = structuredClone(good);
    bad.features[1]!.properties.efficiency = 1.5;
    const badId = String(bad.features[1]!.properties.id);
    const badFile = path.join(out, 'regions-bad.geojson');
    fs.writeFileSync(badFile, JSON.stringify(bad));

    const { context, page, errors } = await newDesk(browser, t.baseUrl);
    await signInAs(page, 'Anders Lund');
    await page.getByRole('navigation', { name: 'Screens' }).getByRole('link', { name: 'Admin' }).click();
    await page.getByRole('heading', { level: 2, name: 'Regions' }).waitFor();
    // The active set is listed before the upload.
    await page.getByText(String(good.features[0]!.properties.id), { exact: true }).waitFor();

    await page.getByLabel('Upload a .geojson file').setInputFiles(badFile);
    const alert = page.getByRole('alert').filter({ hasText: 'The file was not accepted' });
    await alert.waitFor();
    await expect.poll(() => alert.textContent()).toContain(`feature 1 (id "${badId}"): properties.efficiency`);
    expect(await alert.textContent()).toContain('1 problem');
    expect(await page.getByRole('button', { name: 'Replace regions' }).isDisabled()).toBe(true);
    await alert.scrollIntoViewIfNeeded();
    await screenshot(page, 'admin-regions-error');

    const after = await (await admin.fetch('/api/regions')).json();
    expect(after).toEqual(before);
    expect(errors).toEqual([]);
    await context.close();
  });
});
