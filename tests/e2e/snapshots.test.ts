/**
 * Risk seals a snapshot on the Snapshots screen and verifies it in a real browser. The scenario
 * rows come from the hand-made fixture of the Scenarios tests (inserted directly): the seal and
 * its verification are the point here, not the processing chain.
 */
import type { Browser } from 'playwright-core';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { startTestApp, type TestApp } from '../integration/support.ts';
import { seedScenarioFixture, type Fixture } from '../integration/scenarios-fixture.ts';
import { launchBrowser, newDesk, screenshot, signInAs } from './browser.ts';

describe('Snapshots: seal and verify', () => {
  let t: TestApp;
  let browser: Browser;
  let closeBrowser: () => Promise<void>;
  let f: Fixture;

  beforeAll(async () => {
    t = await startTestApp({ SERVE_CLIENT: 'true' }, { mail: {} });
    f = await seedScenarioFixture(t.db.db);
    ({ browser, close: closeBrowser } = await launchBrowser());
  }, 120_000);

  afterAll(async () => {
    await closeBrowser?.();
    await t?.close();
  });

  it('risk seals the latest ensemble cycle and every check of the verification is ok', async () => {
    const { context, page, errors } = await newDesk(browser, t.baseUrl);
    await signInAs(page, 'Maren Solvik');
    await page.getByRole('navigation', { name: 'Screens' }).getByRole('link', { name: 'Snapshots' }).click();
    await page.getByRole('heading', { level: 1, name: 'Snapshots' }).waitFor();

    await page.getByLabel('Models (comma-separated)').fill(f.modelE);
    await page.getByRole('button', { name: 'Seal snapshot' }).click();
    const sealed = page.getByRole('status').filter({ hasText: 'Sealed snapshot #' });
    await sealed.waitFor({ timeout: 20_000 });
    // The latest cycle of the ensemble model: 3 members × 2 regions × 2 days, one run.
    expect(await sealed.textContent()).toMatch(/Sealed snapshot #(\d+): 12 rows from 1 run\(s\), hash [0-9a-f]+/);
    const id = /#(\d+)/.exec((await sealed.textContent())!)![1]!;

    const row = page.getByRole('row').filter({ has: page.getByLabel(`Compare snapshot ${id}`) });
    await row.waitFor();
    expect(await row.textContent()).toContain(f.modelE);
    await row.getByRole('button', { name: 'Verify' }).click();
    const result = page.getByRole('status').filter({ hasText: 'This snapshot' });
    await result.waitFor({ timeout: 20_000 });
    expect(await result.getByText('This snapshot verifies.').isVisible()).toBe(true);
    const checks = result.getByRole('listitem').filter({ hasNotText: 'chain so far' });
    expect(await checks.count()).toBeGreaterThan(2);
    for (const text of await checks.allTextContents()) expect(text).toMatch(/^(ok|skip)/);
    expect(await checks.filter({ hasText: /^ok/ }).count()).toBeGreaterThan(2);
    await result.scrollIntoViewIfNeeded();
    await screenshot(page, 'snapshots');
    expect(errors).toEqual([]);
    await context.close();
  });
});
