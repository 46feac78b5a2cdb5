import { createHash } from 'node:crypto';
import { readFileSync } from 'node:fs';
import { join } from 'node:path';
import { afterAll, beforeAll, describe, expect, inject, it } from 'vitest';
import type { Browser, Page } from 'playwright-core';
import { launchBrowser, newPage, stepShots } from './support/browser';
import { signInAsDemo } from './support/flows';
import { CLOCKED, DEMO_RIG, REPLACEMENT, waitForDemo } from './support/demo';

const baseUrl = inject('baseUrl');

interface ManifestFile {
  key: string;
  recordCount: number;
  missing: number[];
  sha256: string;
}
const manifest = JSON.parse(readFileSync(join(import.meta.dirname, '../../samples/manifest.json'), 'utf8')) as {
  captures: { file: string; expected: { exchanges: { total: number; unanswered: number }; files: ManifestFile[] } }[];
};
const clockedExpected = manifest.captures.find((c) => c.file === CLOCKED)!.expected;

let browser: Browser;
beforeAll(async () => {
  browser = await launchBrowser();
});
afterAll(async () => {
  await browser?.close();
});

async function waitForDemoCalls(page: Page): Promise<{ rigId: number; clocked: number; replacement: number }> {
  const { rigId, ids } = await waitForDemo(page, [CLOCKED, REPLACEMENT]);
  return { rigId, clocked: ids[CLOCKED], replacement: ids[REPLACEMENT] };
}

async function openClockedCapture(page: Page): Promise<{ rigId: number; clocked: number; replacement: number }> {
  await signInAsDemo(page, baseUrl, 'viewer@demo.test');
  const ids = await waitForDemoCalls(page);
  await page.getByRole('link').filter({ hasText: DEMO_RIG }).first().click();
  await page.getByRole('link', { name: 'Captures', exact: true }).click();
  await page.getByRole('link', { name: CLOCKED, exact: true }).click();
  await page.getByRole('heading', { level: 1, name: CLOCKED }).waitFor();
  return ids;
}

describe('call layer views in the browser', () => {
  it('draws the registry desk on the schedule with round-trip times, opens an exchange’s frame in the inspector and in the timeline, and lists the unanswered request first', async () => {
    const shot = stepShots('calls-round-trips');
    const { context, page } = await newPage(browser);
    try {
      await openClockedCapture(page);
      await page.getByRole('link', { name: 'Schedule', exact: true }).click();
      const station = page.getByLabel('Station', { exact: true });
      await station.selectOption({ label: await station.locator('option', { hasText: 'Registry desk' }).innerText() });
      await expect.poll(async () => (await station.locator('option:checked').innerText()).trim()).toMatch(/^Registry desk \(0x21\)/);
      await page.locator('[data-drawn]:not([data-drawn="0"])').waitFor();
      const stats = page.getByLabel('Round-trip statistics', { exact: true });
      await expect.poll(() => stats.innerText(), { timeout: 15_000 }).toMatch(/Median RTT\s*\d/);
      await page.getByRole('img', { name: /^Round-trip times of \d+ answered exchanges/ }).waitFor();
      await shot(page, 'registry-desk-schedule');

      // an exchange opens with its frames: a way into the inspector
      await page.getByTestId('exchange-row').first().getByRole('button', { name: 'schedule' }).click();
      const panel = page.getByTestId('exchange-panel');
      await panel.getByRole('link', { name: /^Request · frame \d+$/ }).click();
      await page.waitForURL(/\/frames\/\d+$/);
      await page.getByTestId('hex-view').waitFor();
      await page.goBack();
      await page.getByTestId('schedule-canvas').waitFor();

      // and into the timeline, filtered to its station and time
      await page.getByTestId('exchange-row').first().getByRole('link', { name: 'timeline' }).click();
      await page.waitForURL(/\/timeline\?/);
      const search = new URL(page.url()).searchParams;
      expect(search.get('station')).toBe(String(0x21));
      expect(Number(search.get('to'))).toBeGreaterThan(Number(search.get('from')));
      await page.getByRole('grid', { name: 'Frames and line events' }).locator('[data-frame-id]').first().waitFor();
      await page.goBack();
      await page.getByTestId('schedule-canvas').waitFor();

      // the choir office's last request is never answered: "Unanswered first" puts it on top
      await station.selectOption({ label: await station.locator('option', { hasText: 'Choir office' }).innerText() });
      await page.getByRole('radio', { name: 'Unanswered first' }).click();
      await expect.poll(() => new URL(page.url()).searchParams.get('order')).toBe('unanswered');
      const first = page.getByTestId('exchange-row').first();
      await expect.poll(() => first.innerText(), { timeout: 15_000 }).toContain('unanswered');
      await expect.poll(() => first.innerText(), { timeout: 15_000 }).toContain('ANTHEMS.TXT');
      await shot(page, 'choir-office-unanswered-first');

      await page.getByRole('radio', { name: 'Slowest first' }).click();
      await expect.poll(() => new URL(page.url()).searchParams.get('order')).toBe('slowest');
      const rttSeconds = async () =>
        (await page.getByTestId('exchange-row').getByTestId('rtt').allInnerTexts())
          .map((t) => t.trim())
          .filter((t) => t !== '—')
          .map((t) => Number.parseFloat(t) * (t.endsWith('µs') ? 1e-6 : t.endsWith('ms') ? 1e-3 : 1));
      const descending = (xs: number[]) => xs.length > 1 && xs.every((x, i) => i === 0 || x <= xs[i - 1]);
      await expect.poll(async () => descending(await rttSeconds()), { timeout: 15_000 }).toBe(true);

      // all stations: a lane each and a table of their service figures
      await station.selectOption('all');
      await page.getByRole('table', { name: 'Service per station' }).waitFor();
      const lanes = await page.getByTestId('schedule-lane').allTextContents();
      for (const name of ['Registry desk', 'Treasurer desk', 'Choir office']) expect(lanes.some((l) => l.includes(name))).toBe(true);
      await shot(page, 'all-stations');
    } finally {
      await context.close();
    }
  });

  it('lists the boot image as complete and downloads its exact bytes, and shows the records of ACCOUNTS.DAT that never went over the wire', async () => {
    const shot = stepShots('calls-recovered-files');
    const { context, page } = await newPage(browser);
    try {
      await openClockedCapture(page);
      await page.getByRole('link', { name: 'Recovered files', exact: true }).click();
      const boot = page.locator('[data-testid="recovered-file"][data-file="WRENBOOT.SYS"]');
      await boot.waitFor();
      const bootExpected = clockedExpected.files.find((f) => f.key === 'boot:WRENBOOT.SYS')!;
      await expect.poll(() => boot.innerText(), { timeout: 15_000 }).toContain('complete');
      await boot.getByRole('img', { name: `${bootExpected.recordCount} of ${bootExpected.recordCount} records seen` }).waitFor();

      const [download] = await Promise.all([page.waitForEvent('download'), boot.getByRole('link', { name: 'Download WRENBOOT.SYS' }).click()]);
      expect(download.suggestedFilename()).toBe('WRENBOOT.SYS');
      const bytes = readFileSync((await download.path())!);
      expect(bytes.length).toBe(bootExpected.recordCount * 128); // CP/M 2.2: 128-byte records
      expect(createHash('sha256').update(bytes).digest('hex')).toBe(bootExpected.sha256);

      const accounts = page.locator('[data-testid="recovered-file"][data-file="ACCOUNTS.DAT"]');
      const accountsExpected = clockedExpected.files.find((f) => f.key === '0:ACCOUNTS.DAT')!;
      const missing = accountsExpected.missing;
      await expect.poll(() => accounts.innerText(), { timeout: 15_000 }).toContain('incomplete');
      await accounts
        .getByRole('img', { name: `${accountsExpected.recordCount - missing.length} of ${accountsExpected.recordCount} records seen; missing records ${missing[0]}–${missing[missing.length - 1]}` })
        .waitFor();

      await accounts.getByRole('button', { name: /^Exchanges/ }).click();
      await expect.poll(() => page.getByTestId('exchange-row').count()).toBeGreaterThan(0);
      await expect.poll(() => page.getByTestId('exchange-row').first().innerText(), { timeout: 15_000 }).toContain('ACCOUNTS.DAT');
      await shot(page, 'files');
    } finally {
      await context.close();
    }
  });

  it('compares the original and the replacement server: the differently answered directory search and the slower answers', async () => {
    const shot = stepShots('calls-compare');
    const { context, page } = await newPage(browser);
    try {
      const { replacement } = await openClockedCapture(page);
      await page.getByRole('link', { name: 'Compare', exact: true }).click();
      await page.getByLabel('B (compare with)').selectOption(String(replacement));
      const summary = page.getByRole('region', { name: 'Comparison summary' });
      await summary.waitFor();
      await expect.poll(() => summary.innerText(), { timeout: 15_000 }).toMatch(/\d+ of \d+ exchanges differ/);

      const different = page.locator('[data-testid="compare-row"][data-kind="answered-differently"], [data-testid="compare-row"][data-kind="outcome-differs"], [data-testid="compare-row"][data-kind="only-in-a"]');
      expect(await different.count()).toBeGreaterThan(0);
      // the replacement hides system files from the directory search, so that answer differs
      await expect.poll(() => different.first().innerText(), { timeout: 15_000 }).toMatch(/SEARCH/i);

      const slower = page.locator('[data-testid="compare-row"][data-kind="slower"]');
      expect(await slower.count()).toBeGreaterThan(0);
      const text = await slower.first().innerText();
      expect(text.match(/RTT \d/g)?.length).toBe(2); // both round trips
      expect(text).toMatch(/B \+\d/); // and how much longer B took
      await shot(page, 'compare');
    } finally {
      await context.close();
    }
  });
});
