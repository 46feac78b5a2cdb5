import { mkdtempSync, readFileSync, rmSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { afterAll, beforeAll, describe, expect, inject, it } from 'vitest';
import type { Browser, Page } from 'playwright-core';
import { writeLargeFrameLog } from './captures-fixtures';
import { launchBrowser, newPage, stepShots } from './support/browser';
import { waitForDemo } from './support/demo';
import { signInAsDemo } from './support/flows';

const baseUrl = inject('baseUrl');
/** writeLargeFrameLog damages every 9973rd frame: 0, 9973, 19946 and 29919 of these */
const FRAMES = 30_000;
const DAMAGED = [0, 9973, 19946, 29919];
let browser: Browser;
let dir = '';
let timelineUrl = '';

beforeAll(async () => {
  browser = await launchBrowser();
  dir = mkdtempSync(join(tmpdir(), 'flagline-timeline-keys-'));
});
afterAll(async () => {
  await browser?.close();
  if (dir) rmSync(dir, { recursive: true, force: true });
});

const grid = (page: Page) => page.getByRole('grid', { name: 'Frames and line events' });
const selected = (page: Page) => new URL(page.url()).searchParams.get('sel');
const focusInList = (page: Page) => page.evaluate(() => document.activeElement?.getAttribute('data-testid') === 'timeline-scroller');
/** the frame's seconds in the log (one frame every 0.5 ms), as the time column shows them */
const timeOf = (index: number) => (index * 0.0005).toFixed(6);

describe('the timeline from the keyboard', () => {
  it('keeps the keys in the list after n and p jump past the loaded rows, and says so when no later damaged frame exists', async () => {
    const shot = stepShots('timeline-keys');
    const { context, page } = await newPage(browser);
    page.setDefaultTimeout(30_000);
    try {
      await signInAsDemo(page, baseUrl, 'analyst@demo.test');
      const { rigId } = await waitForDemo(page, [], { callLayer: false });
      await page.goto(`${baseUrl}/rigs/${rigId}/captures/new`);
      await page.getByLabel('Capture file').setInputFiles(writeLargeFrameLog(dir, FRAMES));
      await page.getByTestId('detected-format').filter({ hasText: 'hex frame log' }).waitFor();
      await page.getByRole('button', { name: 'Save roles and decode' }).click();
      await page.getByText('Frames over time').waitFor({ timeout: 120_000 });
      timelineUrl = page.url().replace(/\/?$/, '/timeline');

      await page.getByRole('navigation', { name: 'Capture views' }).getByRole('link', { name: 'Timeline', exact: true }).click();
      const rows = grid(page).locator('[data-frame-id]');
      await rows.first().click();
      const rowTime = async () => (await grid(page).locator('[aria-selected="true"] [role="gridcell"]').first().innerText()).trim();
      await expect.poll(rowTime).toBe(timeOf(DAMAGED[0]));

      // n: the next damaged frame is thousands of rows on, past every loaded page; the list starts over there and keeps the keys
      await page.keyboard.press('n');
      await expect.poll(rowTime).toBe(timeOf(DAMAGED[1]));
      await expect.poll(() => focusInList(page)).toBe(true);
      await shot(page, 'after-n');
      await page.keyboard.press('n');
      await expect.poll(rowTime).toBe(timeOf(DAMAGED[2]));
      await expect.poll(() => focusInList(page)).toBe(true);
      // the arrow keys still move the selection, Enter still opens
      await page.keyboard.press('ArrowDown');
      await expect.poll(rowTime).toBe(timeOf(DAMAGED[2] + 1));
      await page.keyboard.press('p');
      await expect.poll(rowTime).toBe(timeOf(DAMAGED[2]));
      await page.keyboard.press('n');
      await expect.poll(rowTime).toBe(timeOf(DAMAGED[3]));
      await expect.poll(() => focusInList(page)).toBe(true);

      // past the last one: an answer in words, the selection stays (and no 404 in the console)
      const sel = selected(page);
      await page.keyboard.press('n');
      await page.getByRole('status').filter({ hasText: 'No later damaged frame' }).waitFor();
      expect(selected(page)).toBe(sel);
      await shot(page, 'no-later-damaged-frame');
      await page.keyboard.press('Enter');
      await page.waitForURL(/\/frames\/\d+$/);
    } finally {
      await context.close();
    }
  });

  it('names its time columns in our words, gives the summary the free width, and shows a cut summary whole on hover', async () => {
    expect(timelineUrl).not.toBe('');
    const shot = stepShots('timeline-columns');
    const { context, page } = await newPage(browser);
    try {
      await signInAsDemo(page, baseUrl, 'viewer@demo.test');
      await page.setViewportSize({ width: 1440, height: 900 });
      await page.goto(timelineUrl);
      await grid(page).getByTestId('row-summary').first().waitFor();
      const headers = await page.getByRole('columnheader').allInnerTexts();
      expect(headers.map((h) => h.trim().toLowerCase())).toEqual(['time (s)', 'gap', 'since selected', 'link', 'station', 'kind', 'n(s) n(r) p/f', 'len', 'status', 'summary']);
      expect(headers.join(' ')).not.toContain('Δ');
      const summary = grid(page).getByTestId('row-summary').first();
      await summary.waitFor();
      const width = () => summary.evaluate((el) => (el.parentElement as HTMLElement).getBoundingClientRect().width);
      expect(await width()).toBeGreaterThan(400);
      await shot(page, 'wide');

      // narrow: the summary ends in an ellipsis, and its whole text is its title
      await page.setViewportSize({ width: 1024, height: 800 });
      await expect.poll(width).toBeLessThan(300);
      const cut = await summary.evaluate((el: HTMLElement) => ({ cut: el.scrollWidth > el.clientWidth, overflow: getComputedStyle(el).textOverflow, title: el.title, text: el.textContent }));
      expect(cut.cut).toBe(true);
      expect(cut.overflow).toBe('ellipsis');
      expect(cut.title).toBe(cut.text);
      await shot(page, 'narrow');
    } finally {
      await context.close();
    }
  });

  it('exports the frames the filters select, as CSV and as JSON', async () => {
    expect(timelineUrl).not.toBe('');
    const shot = stepShots('timeline-export');
    const { context, page } = await newPage(browser);
    try {
      await signInAsDemo(page, baseUrl, 'viewer@demo.test');
      await page.goto(timelineUrl);
      await page.getByRole('button', { name: 'Damaged only' }).click();
      await page.getByTestId('match-count').filter({ hasText: `${DAMAGED.length} rows match` }).waitFor();
      await shot(page, 'damaged-only');
      const exports = page.getByRole('group', { name: 'Export the frames that match these filters' });

      const [csv] = await Promise.all([page.waitForEvent('download'), exports.getByRole('link', { name: 'CSV' }).click()]);
      expect(csv.suggestedFilename()).toMatch(/-frames\.csv$/);
      const lines = readFileSync((await csv.path())!, 'utf8').trim().split('\n');
      expect(lines[0]).toMatch(/^id,link,seq,t,/);
      const times = lines.slice(1).map((l) => Number(l.split(',')[3]));
      expect(times).toHaveLength(DAMAGED.length);
      times.forEach((t, k) => expect(t).toBeCloseTo(DAMAGED[k] * 0.0005, 9));

      const [json] = await Promise.all([page.waitForEvent('download'), exports.getByRole('link', { name: 'JSON' }).click()]);
      const frames = JSON.parse(readFileSync((await json.path())!, 'utf8')) as { status: string; seq: number }[];
      expect(frames).toHaveLength(DAMAGED.length);
      expect(frames.every((f) => f.status === 'bad-fcs')).toBe(true);
    } finally {
      await context.close();
    }
  });
});
