/**
 * The meteorologist in a real browser: the run view of a processed ensemble run (ascent map, its
 * Pa/s legend, the valid-time scrubber), then a regime call written in the editor, published,
 * and its e-mail found on the Outbox screen (the local mail catcher).
 */
import fs from 'node:fs';
import os from 'node:os';
import path from 'node:path';
import { eq } from 'drizzle-orm';
import type { Browser } from 'playwright-core';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { subscriptions } from '../../server/db/schema.ts';
import { signIn, startTestApp, type TestApp } from '../integration/support.ts';
import { launchBrowser, newDesk, screenshot, signInAs } from './browser.ts';
import { processedEnsemble, putRegions } from './seed.ts';

describe('Meteorologist: run view, regime call, outbox', () => {
  let t: TestApp;
  let browser: Browser;
  let closeBrowser: () => Promise<void>;
  let runId: string;
  let model: string;
  const out = fs.mkdtempSync(path.join(os.tmpdir(), 'liftwise-e2e-met-'));
  const subscriber = `desk-e2e-${process.pid}@example.test`;

  beforeAll(async () => {
    t = await startTestApp({ SERVE_CLIENT: 'true' }, { mail: {} });
    await putRegions(t);
    ({ runId, model } = await processedEnsemble(t, out, `e2e-met-${process.pid}`));
    const admin = await signIn(t, 'admin');
    const sub = await admin.fetch('/api/subscriptions', {
      method: 'POST',
      headers: { 'Content-Type': 'application/json' },
      body: JSON.stringify({ email: subscriber, name: 'E2E desk', regionIds: [] }),
    });
    if (sub.status !== 201) throw new Error(`subscription refused: ${sub.status} ${await sub.text()}`);
    ({ browser, close: closeBrowser } = await launchBrowser());
  }, 150_000);

  afterAll(async () => {
    await closeBrowser?.();
    // Other test files of this database count the recipients of their own calls.
    await t?.db.db.delete(subscriptions).where(eq(subscriptions.email, subscriber));
    await t?.close();
    fs.rmSync(out, { recursive: true, force: true });
  });

  it('reads the ascent map, scrubs the valid time, publishes a regime call and finds its mail', async () => {
    const { context, page, errors } = await newDesk(browser, t.baseUrl);
    await signInAs(page, 'Ilse Varga');

    // Run view: the map, the legend in Pa/s, the scrubber.
    await page.goto(`/runs/${runId}`);
    await page.getByRole('heading', { level: 1, name: 'Run view' }).waitFor();
    const map = page.getByRole('img', { name: /^Omega at \d+ hPa, \+\d+ h/ });
    await map.waitFor({ timeout: 20_000 });
    const stepOf = async () => Number(/\+(\d+) h/.exec((await map.getAttribute('aria-label'))!)![1]);
    const firstStep = await stepOf();
    expect(await page.getByText(/strongest ascent/).isVisible()).toBe(true);
    expect(await page.getByText(/^-?[\d.]+ Pa\/s \(/).first().isVisible()).toBe(true);
    expect(await page.getByText('Omega in Pa/s (1 Pa/s = 36 hPa/h)', { exact: false }).isVisible()).toBe(true);
    const scrubber = page.getByRole('slider', { name: 'Valid time' });
    await scrubber.focus();
    await page.keyboard.press('ArrowRight');
    await expect.poll(stepOf).toBeGreaterThan(firstStep);
    const movedTo = await stepOf();
    expect(new URL(page.url()).searchParams.get('step')).toBe(String(movedTo));
    await map.waitFor();
    await screenshot(page, 'run-view-map');

    // Regime calls: a new call, period, regime, confidence, member weights to 100 %, publish.
    await page.getByRole('navigation', { name: 'Screens' }).getByRole('link', { name: 'Regime calls' }).click();
    await page.getByRole('heading', { level: 1, name: 'Regime calls' }).waitFor();
    await page.getByRole('button', { name: 'New call' }).click();
    const editor = page.locator('section, div').filter({ has: page.getByRole('heading', { level: 2, name: 'Draft call, version 1' }) }).last();
    await editor.waitFor();
    await editor.getByLabel('Valid from').fill('2026-12-02');
    await editor.getByLabel('to', { exact: true }).first().fill('2026-12-04');
    await editor.getByLabel('Confidence').selectOption('high');
    await editor.getByRole('button', { name: 'Add regime' }).click();
    await editor.getByLabel('regime', { exact: true }).selectOption({ label: 'Westerly flow' });
    await editor.getByRole('checkbox', { name: new RegExp(model) }).first().check();
    const weights = editor.getByRole('spinbutton', { name: /^weight of / });
    await expect.poll(() => weights.count()).toBeGreaterThan(1);
    const n = await weights.count();
    const publish = editor.getByRole('button', { name: 'Publish', exact: true });
    // Not publishable until the weights add up to 100 %.
    expect(await publish.isDisabled()).toBe(true);
    for (let i = 0; i < n; i++) await weights.nth(i).fill(String(i === 0 ? 100 - 10 * (n - 1) : 10));
    await editor.getByText('100.0 %').waitFor();
    expect(await publish.isDisabled()).toBe(false);
    await screenshot(page, 'regime-call-editor');
    page.once('dialog', (d) => void d.accept());
    await publish.click();
    await page.getByRole('heading', { level: 2, name: /^Regime call, version 1 \(published/ }).waitFor({ timeout: 20_000 });

    // Outbox: the published call's mail, caught locally.
    const subject = /^Regime call .*: Westerly flow, confidence high$/;
    await page.getByRole('navigation', { name: 'Screens' }).getByRole('link', { name: 'Outbox' }).click();
    await page.getByRole('heading', { level: 1, name: 'Outbox' }).waitFor();
    await expect
      .poll(async () => {
        if (await page.getByRole('button', { name: subject }).count()) return true;
        await page.reload();
        await page.getByRole('heading', { level: 1, name: 'Outbox' }).waitFor();
        return page.getByRole('button', { name: subject }).count().then((c) => c > 0);
      }, { timeout: 20_000, interval: 500 })
      .toBe(true);
    const row = page.getByRole('row').filter({ hasText: subscriber });
    expect(await row.count()).toBeGreaterThan(0);
    await row.first().getByRole('button', { name: subject }).click();
    await page.frameLocator('iframe[title^="Mail: Regime call"]').getByText('Westerly flow').first().waitFor();
    await screenshot(page, 'outbox');
    expect(errors).toEqual([]);
    await context.close();
  });
});
