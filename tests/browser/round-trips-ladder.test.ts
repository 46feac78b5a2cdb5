import { readFileSync } from 'node:fs';
import { afterAll, beforeAll, describe, expect, inject, it } from 'vitest';
import type { Browser, Page } from 'playwright-core';
import { launchBrowser, newPage, stepShots } from './support/browser';
import { CLOCKED, openDemoCapture, openTab, waitForDemo } from './support/demo';
import { signInAsDemo } from './support/flows';

const baseUrl = inject('baseUrl');
let browser: Browser;

beforeAll(async () => {
  browser = await launchBrowser();
});
afterAll(async () => {
  await browser?.close();
});

const bandInView = (page: Page, id: string) =>
  page.locator(`[data-exchange="${id}"]`).evaluate((el) => {
    const r = el.getBoundingClientRect();
    return r.top >= 0 && r.bottom <= window.innerHeight;
  });

describe('Round trips', () => {
  it('brings the exchange whose “ladder” link was clicked into view, on whichever ladder page it is, and exports the exchanges listed', async () => {
    const shot = stepShots('round-trips-ladder');
    const { context, page } = await newPage(browser);
    try {
      await signInAsDemo(page, baseUrl, 'viewer@demo.test');
      await waitForDemo(page, [CLOCKED]);
      await openDemoCapture(page, baseUrl, CLOCKED);
      await openTab(page, 'Round trips');
      await page.getByLabel('Station', { exact: true }).selectOption('all');
      await page.getByRole('group', { name: /^Ladder of \d+ exchanges$/ }).waitFor();
      const rows = page.getByTestId('exchange-row');
      await expect.poll(() => rows.count()).toBeGreaterThan(24);

      // the last exchange in the list sits on the ladder's second page, far above the list
      const last = rows.last();
      await last.scrollIntoViewIfNeeded();
      await last.getByRole('button', { name: 'ladder' }).click();
      await expect.poll(() => new URL(page.url()).searchParams.get('lp')).toBe('1');
      const id = new URL(page.url()).searchParams.get('ex')!;
      await page.locator(`[data-exchange="${id}"]`).waitFor();
      await expect.poll(() => bandInView(page, id)).toBe(true);
      await shot(page, 'last-exchange-in-view');

      // one on the first page too, from the bottom of the list
      const early = rows.nth(2);
      await early.scrollIntoViewIfNeeded();
      await early.getByRole('button', { name: 'ladder' }).click();
      await expect.poll(() => new URL(page.url()).searchParams.get('lp')).toBe('0');
      const earlyId = new URL(page.url()).searchParams.get('ex')!;
      await expect.poll(() => bandInView(page, earlyId)).toBe(true);

      // the exchanges listed, as a file: every station's here
      const total = await rows.count();
      const exports = page.getByRole('group', { name: 'Export every exchange of this capture' });
      const [json] = await Promise.all([page.waitForEvent('download'), exports.getByRole('link', { name: 'JSON' }).click()]);
      const exchanges = JSON.parse(readFileSync((await json.path())!, 'utf8')) as { id: number; outcome: string }[];
      expect(exchanges).toHaveLength(total);
      expect(exchanges.some((e) => String(e.id) === id)).toBe(true);
      const [csv] = await Promise.all([page.waitForEvent('download'), exports.getByRole('link', { name: 'CSV' }).click()]);
      expect(readFileSync((await csv.path())!, 'utf8').trim().split('\n')).toHaveLength(total + 1);
    } finally {
      await context.close();
    }
  });
});
