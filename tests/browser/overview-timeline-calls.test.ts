import { mkdirSync } from 'node:fs';
import { join, resolve } from 'node:path';
import { afterAll, beforeAll, describe, expect, inject, it } from 'vitest';
import type { Browser, Page } from 'playwright-core';
import { launchBrowser, newPage, stepShots } from './support/browser';
import { signInAsDemo } from './support/flows';
import { CLOCKED, DEMO_RIG, getJson, waitForDemo } from './support/demo';

const baseUrl = inject('baseUrl');
// beside stepShots' own screenshots of this test (same folder rule as support/browser.ts)
const artifactsDir = resolve(import.meta.dirname, `../../test-artifacts/${process.env.FLAGLINE_BROWSER_COLOR_SCHEME === 'dark' ? 'browser-dark' : 'browser'}/overview-timeline-calls`);
mkdirSync(artifactsDir, { recursive: true });

let browser: Browser;
beforeAll(async () => {
  browser = await launchBrowser();
});
afterAll(async () => {
  await browser?.close();
});

interface StationStats {
  address: number;
  name: string | null;
  answered: number;
  retried: number;
}
interface Exchange {
  id: number;
  requestFrameId: number | null;
  responseFrameIds: number[];
  tRequest: number;
  station: { address: number };
  rttSeconds: number | null;
  call: { name: string | null };
}

async function waitForClocked(page: Page): Promise<{ rigId: number; captureId: number }> {
  const { rigId, ids } = await waitForDemo(page, [CLOCKED]);
  return { rigId, captureId: ids[CLOCKED] };
}

describe('exchanges on the overview and in the timeline', () => {
  it('charts each station’s turnaround on the overview, marks a request frame with its call and round trip in the timeline, and opens that exchange on the schedule', async () => {
    const shot = stepShots('overview-timeline-calls');
    const { context, page } = await newPage(browser);
    try {
      await signInAsDemo(page, baseUrl, 'viewer@demo.test');
      const { rigId, captureId } = await waitForClocked(page);
      const stats = await getJson<{ stations: StationStats[] }>(page, `/api/rigs/${rigId}/captures/${captureId}/exchanges/stats`);
      expect(stats.stations.length).toBeGreaterThan(1);

      await page.getByRole('link').filter({ hasText: DEMO_RIG }).first().click();
      await page.getByRole('link', { name: 'Captures', exact: true }).click();
      await page.getByRole('link', { name: CLOCKED, exact: true }).click();
      await page.getByRole('heading', { level: 1, name: CLOCKED }).waitFor();

      // overview: one turnaround histogram per station that has exchanges, counting its answered ones
      const list = page.getByRole('list', { name: 'Turnaround per station' });
      await list.scrollIntoViewIfNeeded();
      for (const s of stats.stations) {
        const answered = s.answered + s.retried;
        if (answered === 0) continue;
        await list.getByRole('img', { name: new RegExp(`^Turnaround of .*\\(0x${s.address.toString(16).toUpperCase().padStart(2, '0')}\\): ${answered} answered exchanges$`) }).waitFor();
      }
      await expect(list.getByRole('listitem').count()).resolves.toBe(stats.stations.length);
      await expect.poll(() => list.innerText(), { timeout: 15_000 }).toContain('Registry desk');
      await shot(page, 'overview-turnaround');

      // timeline: a request frame carries its call name and round trip, from the exchange it opens
      await page.getByRole('navigation', { name: 'Capture views' }).getByRole('link', { name: 'Timeline', exact: true }).click();
      const grid = page.getByRole('grid', { name: 'Frames and line events' });
      const marker = grid.getByRole('link', { name: /^request: .+ · \d+(\.\d+)? (µs|ms), open in the schedule$/ }).first();
      await marker.waitFor();
      const exchangeId = Number(await marker.getAttribute('data-exchange-id'));
      const frameId = Number(await marker.locator('xpath=ancestor::*[@data-frame-id]').getAttribute('data-frame-id'));
      const page1 = await getJson<{ rows: Exchange[] }>(page, `/api/rigs/${rigId}/captures/${captureId}/exchanges?limit=1000`);
      const exchange = page1.rows.find((r) => r.id === exchangeId)!;
      expect(exchange.requestFrameId).toBe(frameId);
      expect((await marker.innerText()).trim()).toContain(exchange.call.name!);

      // opened at the request's time, the list starts there and its answer is marked as the answer of the same exchange
      await page.goto(`${baseUrl}/rigs/${rigId}/captures/${captureId}/timeline?at=${exchange.tRequest}`);
      const request = grid.locator(`[data-frame-id="${frameId}"] a[data-exchange-id="${exchangeId}"]`);
      await expect(request.getAttribute('aria-label')).resolves.toMatch(/^request: /);
      const answer = grid.locator(`[data-frame-id="${exchange.responseFrameIds[0]}"] a[data-exchange-id="${exchangeId}"]`);
      await expect(answer.getAttribute('aria-label')).resolves.toMatch(/^answer: /);
      await shot(page, 'timeline-call-markers');
      // a full-page shot redraws the list from its top; this one scrolls the request to the top of the list first
      const rowIndex = Number(await grid.locator(`[data-frame-id="${frameId}"]`).getAttribute('aria-rowindex'));
      await grid.evaluate((el, index) => el.scrollTo({ top: (index - 1) * 30 }), rowIndex);
      await answer.waitFor();
      await grid.screenshot({ path: join(artifactsDir, '02b-timeline-request-and-answer.png') });

      // the marker opens the schedule with that exchange in view, selected and opened
      await request.click();
      await page.waitForURL(new RegExp(`/schedule\\?.*ex=${exchangeId}`));
      await page.getByTestId('exchange-panel').waitFor();
      await expect.poll(() => page.getByTestId('schedule-canvas').locator('..').getAttribute('data-selected-x')).not.toBeNull();
      expect(new URL(page.url()).searchParams.get('station')).toBe(String(exchange.station.address));
      await shot(page, 'schedule-highlighted');
    } finally {
      await context.close();
    }
  });
});
