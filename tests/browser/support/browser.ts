import { mkdirSync } from 'node:fs';
import { join, resolve } from 'node:path';
import { chromium, type Browser, type BrowserContext, type Page } from 'playwright-core';
import { watchConsole } from './console';

/** FLAGLINE_BROWSER_COLOR_SCHEME=dark runs every browser test in dark mode (screenshots go to browser-dark/). */
const colorScheme = process.env.FLAGLINE_BROWSER_COLOR_SCHEME === 'dark' ? 'dark' : 'light';
const artifacts = resolve(import.meta.dirname, `../../../test-artifacts/${colorScheme === 'dark' ? 'browser-dark' : 'browser'}`);

export async function launchBrowser(): Promise<Browser> {
  return chromium.launch({
    executablePath: '/usr/bin/chromium',
    args: ['--headless', '--no-sandbox', '--disable-gpu', '--disable-background-networking', '--disable-component-update', '--disable-sync'],
  });
}

export async function newPage(browser: Browser): Promise<{ context: BrowserContext; page: Page }> {
  const context = await browser.newContext({ viewport: { width: 1200, height: 860 }, colorScheme });
  // a console error or warning the test did not cause fails it (support/console-setup.ts)
  watchConsole(context);
  const page = await context.newPage();
  page.setDefaultTimeout(15_000);
  return { context, page };
}

/** Saves a full-page screenshot of one step under test-artifacts/browser/<test>/. */
export function stepShots(testName: string) {
  const dir = join(artifacts, testName);
  mkdirSync(dir, { recursive: true });
  let step = 0;
  return async (page: Page, label: string) => {
    step += 1;
    await page.screenshot({ path: join(dir, `${String(step).padStart(2, '0')}-${label}.png`), fullPage: true });
  };
}

/** A name no other test or earlier run uses, so tests share one server without colliding. */
export function unique(prefix: string): string {
  return `${prefix} ${Date.now().toString(36)}${Math.floor(Math.random() * 1e4).toString(36)}`;
}
