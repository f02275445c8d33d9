/**
 * A real browser for the end-to-end tests: Debian's Chromium driven by playwright-core (never a
 * downloaded browser). Screenshots of the main screens are kept in test-results/screens as
 * artefacts of the run.
 */
import fs from 'node:fs';
import os from 'node:os';
import path from 'node:path';
import { chromium, type Browser, type BrowserContext, type Page } from 'playwright-core';

export const CHROMIUM = '/usr/bin/chromium';
export const SCREENS_DIR = path.resolve(import.meta.dirname, '..', '..', 'test-results', 'screens');

export async function launchBrowser(): Promise<{ browser: Browser; close(): Promise<void> }> {
  const profile = fs.mkdtempSync(path.join(os.tmpdir(), 'liftwise-chromium-'));
  const browser = await chromium.launch({
    executablePath: CHROMIUM,
    args: [
      '--headless',
      '--no-sandbox',
      '--disable-gpu',
      '--disable-quic',
      '--no-first-run',
      '--disable-background-networking',
      '--disable-component-update',
      '--disable-sync',
      `--disk-cache-dir=${profile}`,
    ],
  });
  return {
    browser,
    close: async () => {
      await browser.close();
      fs.rmSync(profile, { recursive: true, force: true });
    },
  };
}

export async function newDesk(browser: Browser, baseURL: string): Promise<{ context: BrowserContext; page: Page; errors: string[] }> {
  const context = await browser.newContext({ baseURL, viewport: { width: 1440, height: 900 }, acceptDownloads: true });
  const page = await context.newPage();
  const errors: string[] = [];
  page.on('pageerror', (err) => errors.push(err.message));
  page.on('console', (msg) => {
    if (msg.type() === 'error' && !/401|Unauthorized/.test(msg.text())) errors.push(msg.text());
  });
  return { context, page, errors };
}

/** Signs in through the organisation's button and the local identity provider's person list. */
export async function signInAs(page: Page, personName: string): Promise<void> {
  await page.goto('/');
  await page.getByRole('link', { name: 'Sign in' }).click();
  await page.getByRole('button', { name: new RegExp(personName) }).click();
  await page.waitForURL((url) => !url.pathname.startsWith('/idp') && !url.pathname.startsWith('/auth') && !url.pathname.startsWith('/sign-in'));
}

export async function screenshot(page: Page, name: string): Promise<void> {
  fs.mkdirSync(SCREENS_DIR, { recursive: true });
  await page.screenshot({ path: path.join(SCREENS_DIR, `${name}.png`), fullPage: false });
}
