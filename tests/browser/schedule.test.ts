import { afterAll, beforeAll, describe, expect, inject, it } from 'vitest';
import type { Browser, Page } from 'playwright-core';
import { launchBrowser, newPage, stepShots } from './support/browser';
import { openDemoCapture, openTab, RACES, waitForDemo } from './support/demo';
import { signInAsDemo } from './support/flows';

const baseUrl = inject('baseUrl');
let browser: Browser;

beforeAll(async () => {
  browser = await launchBrowser();
});
afterAll(async () => {
  await browser?.close();
});

/** the visible range's length in seconds, from the line above the canvas */
const spanOf = async (page: Page) => {
  const text = (await page.getByTestId('schedule-range').textContent()) ?? '';
  const m = /([\d.]+) s – ([\d.]+) s/.exec(text);
  return m ? Number(m[2]) - Number(m[1]) : NaN;
};

describe('Schedule', () => {
  it('leads from the overview to the starved station and the under-run in one click each, zooms the schedule and opens an exchange with its frames', async () => {
    const shot = stepShots('schedule');
    const { context, page } = await newPage(browser);
    try {
      await signInAsDemo(page, baseUrl, 'viewer@demo.test');
      await waitForDemo(page, [RACES]);
      await openDemoCapture(page, baseUrl, RACES);

      // overview → the starved station's wait on the schedule
      const card = page.getByTestId('timing-card');
      await card.waitFor();
      await shot(page, 'overview-timing-card');
      await card.getByRole('link', { name: /^Choir office starved: waited .+, passed over 3 times →$/ }).click();
      await page.waitForURL(/\/schedule\?.*station=35/);
      await page.getByTestId('schedule-canvas').waitFor();
      await expect.poll(() => page.getByTestId('schedule-lane').allTextContents()).toEqual([expect.stringContaining('Registry desk'), expect.stringContaining('Treasurer desk'), expect.stringContaining('Choir office')]);
      const choir = page.getByTestId('service-row').filter({ hasText: 'Choir office' });
      await expect.poll(async () => (await choir.locator('td').last().textContent())?.trim()).toBe('1');
      await shot(page, 'starved-station');

      // overview → the under-runs in the fault desk, with the offset histogram and the budget line
      await page.goBack();
      await page.getByTestId('timing-card').getByRole('link', { name: /^2 transmitter under-runs/ }).click();
      await page.waitForURL(/\/faults\?cause=tx-underrun/);
      const rows = page.getByTestId('fault-row');
      await expect.poll(() => rows.count()).toBe(2);
      await expect.poll(() => rows.first().textContent()).toMatch(/Cut short after 98 octets/);
      await expect.poll(() => page.getByTestId('budget-line').textContent()).toMatch(/10\.0 µs per octet = 40\.0 CPU cycles at 4 MHz/);
      await expect.poll(() => page.getByLabel('Under-run octet offsets').textContent()).toMatch(/98/);
      await shot(page, 'under-runs');

      // the schedule: zoom with the buttons and the wheel, then open the slowest exchange
      await openTab(page, 'Schedule');
      await page.getByTestId('schedule-canvas').waitFor();
      await page.getByRole('button', { name: 'Whole capture' }).click();
      await expect.poll(() => spanOf(page)).toBeGreaterThan(0.03);
      const whole = await spanOf(page);
      await page.getByRole('button', { name: 'Zoom in' }).click();
      await page.getByRole('button', { name: 'Zoom in' }).click();
      await expect.poll(() => spanOf(page)).toBeLessThan(whole / 3);
      const box = (await page.getByTestId('schedule-canvas').boundingBox())!;
      await page.mouse.move(box.x + box.width / 2, box.y + box.height / 2);
      const before = await spanOf(page);
      await page.mouse.wheel(0, -400);
      await expect.poll(() => spanOf(page)).toBeLessThan(before * 0.8);
      await shot(page, 'zoomed');

      await page.getByRole('radio', { name: 'Slowest first' }).click();
      const first = page.getByTestId('exchange-row').first();
      await first.getByRole('button', { name: 'schedule' }).click();
      const panel = page.getByTestId('exchange-panel');
      await panel.waitFor();
      const id = new URL(page.url()).searchParams.get('ex');
      expect(id).not.toBeNull();
      // the span is drawn selected: close the panel, then select the span itself on the canvas
      const wrap = page.getByTestId('schedule-canvas').locator('..');
      await expect.poll(() => wrap.getAttribute('data-selected-x')).not.toBeNull();
      const x = Number(await wrap.getAttribute('data-selected-x'));
      const y = Number(await wrap.getAttribute('data-selected-y'));
      await panel.getByRole('button', { name: 'Close' }).click();
      await shot(page, 'closed');
      await expect.poll(() => new URL(page.url()).searchParams.get('ex')).toBeNull();
      await expect.poll(() => panel.count()).toBe(0);
      const canvasBox = (await page.getByTestId('schedule-canvas').boundingBox())!;
      await page.mouse.click(canvasBox.x + x, canvasBox.y + y);
      await expect.poll(() => new URL(page.url()).searchParams.get('ex')).toBe(id);
      await panel.waitFor();
      await shot(page, 'exchange-open');
      await panel.getByRole('link', { name: /^Request · frame \d+$/ }).click();
      await page.waitForURL(/\/frames\/\d+/, { timeout: 30_000, waitUntil: 'commit' }).catch(async (e: unknown) => {
        // what the page showed when the link did not lead on, for the one who reads the failure
        await shot(page, 'request-link-did-not-lead-on');
        throw new Error(`still at ${page.url()} after following the request link`, { cause: e });
      });
    } finally {
      await context.close();
    }
    // the demo decodes every sample first
  }, 240_000);
});
