import { mkdirSync } from 'node:fs';
import { join, resolve } from 'node:path';
import { afterAll, beforeAll, describe, expect, inject, it } from 'vitest';
import type { Browser, Page } from 'playwright-core';
import type { FaultDeskView } from '../../shared/schemas';
import { launchBrowser, newPage } from './support/browser';
import { CLOCKED, getJson, openDemoCapture, openTab, waitForDemo } from './support/demo';
import { signInAsDemo } from './support/flows';

const baseUrl = inject('baseUrl');
/** the README's pictures, made again by every light-mode run so they show the current screens */
const shots = resolve(import.meta.dirname, '../../docs/screenshots');
const light = process.env.FLAGLINE_BROWSER_COLOR_SCHEME !== 'dark';
let browser: Browser;

beforeAll(async () => {
  browser = await launchBrowser();
  mkdirSync(shots, { recursive: true });
});
afterAll(async () => {
  await browser?.close();
});

async function picture(page: Page, name: string): Promise<void> {
  // fonts and the last query settle before the picture
  await page.evaluate(() => document.fonts.ready);
  await page.waitForLoadState('networkidle');
  if (light) await page.screenshot({ path: join(shots, `${name}.png`) });
}

describe('the README’s screenshots', () => {
  it('shows the demo session’s timeline, a bad frame in the inspector and the recovered files', async () => {
    const { context, page } = await newPage(browser);
    try {
      await page.setViewportSize({ width: 1280, height: 800 });
      await signInAsDemo(page, baseUrl, 'viewer@demo.test');
      const { rigId, ids } = await waitForDemo(page, [CLOCKED]);
      await openDemoCapture(page, baseUrl, CLOCKED);

      await openTab(page, 'Timeline');
      const grid = page.getByRole('grid', { name: 'Frames and line events' });
      await page.getByRole('button', { name: 'I', exact: true }).click();
      await grid.locator('[data-exchange-id]').first().waitFor();
      await grid.locator('[data-frame-id]').nth(3).click();
      await picture(page, 'timeline');

      const desk = await getJson<FaultDeskView>(page, `/api/rigs/${rigId}/captures/${ids[CLOCKED]}/faults?cause=bad-fcs-explained`);
      expect(desk.rows.length).toBeGreaterThan(0);
      await page.goto(`${baseUrl}/rigs/${rigId}/captures/${ids[CLOCKED]}/frames/${desk.rows[0].frameId}`);
      await page.getByTestId('diagnosis').waitFor();
      await page.getByTestId('call-reason').waitFor();
      await picture(page, 'inspector-bad-frame');

      await openTab(page, 'Recovered files');
      await page.locator('[data-testid="recovered-file"][data-file="WRENBOOT.SYS"]').waitFor();
      await picture(page, 'recovered-files');
    } finally {
      await context.close();
    }
  });
});
