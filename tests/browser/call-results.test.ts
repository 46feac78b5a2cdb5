// The call layer's results on screen, over a capture made by our own encoder and uploaded through
// the upload page: the exchange detail says why an exchange was retried (its damaged answer) and
// shows a lock conflict, the timeline marks the damaged answer, and Recovered files says where
// each size came from (linking to that exchange) and lists the lock conflict.
import { mkdtempSync, rmSync, writeFileSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { afterAll, beforeAll, describe, expect, inject, it } from 'vitest';
import type { Browser } from 'playwright-core';
import type { ExchangePage } from '../../shared/schemas';
import { resultsSession, vcdOf } from '../api/call-results-captures';
import { launchBrowser, newPage, stepShots, unique } from './support/browser';
import { getJson, waitForDemo } from './support/demo';
import { signInAsDemo } from './support/flows';

const baseUrl = inject('baseUrl');
let browser: Browser;
let dir = '';
beforeAll(async () => {
  browser = await launchBrowser();
  dir = mkdtempSync(join(tmpdir(), 'flagline-call-results-'));
});
afterAll(async () => {
  await browser?.close();
  if (dir) rmSync(dir, { recursive: true, force: true });
});

describe('call results in the browser', () => {
  it('shows a damaged answer and a lock conflict in the exchange detail, and where recovered files got their size', async () => {
    const shot = stepShots('call-results');
    const name = `${unique('call-results').replace(/\s+/g, '-')}.vcd`;
    const file = join(dir, name);
    writeFileSync(file, vcdOf(resultsSession()));
    const { context, page } = await newPage(browser);
    try {
      await signInAsDemo(page, baseUrl, 'analyst@demo.test');
      const { rigId } = await waitForDemo(page, [], { callLayer: false });
      await page.goto(`${baseUrl}/rigs/${rigId}/captures/new`);
      await page.getByLabel('Capture file').setInputFiles(file);
      await page.getByTestId('detected-format').waitFor();
      const captureId = Number(new URL(page.url()).pathname.split('/')[4]);
      const form = page.getByRole('form', { name: 'Channel roles' });
      await form.getByLabel('Clock', { exact: true }).selectOption('clk');
      await form.getByLabel('Encoding').selectOption('nrzi');
      for (const [channel, direction, station] of [
        ['p1_txd', 'to-server', '33'],
        ['p1_rxd', 'from-server', '33'],
        ['p2_txd', 'to-server', '34'],
        ['p2_rxd', 'from-server', '34'],
      ]) {
        await form.getByLabel(`Use of ${channel}`).selectOption('data');
        await form.getByLabel(`Direction of ${channel}`).selectOption(direction);
        await form.getByLabel(`Station on ${channel}`).selectOption(station);
      }
      await form.getByRole('button', { name: 'Save roles and decode' }).click();
      await shot(page, 'roles-saved');
      const base = `/api/rigs/${rigId}/captures/${captureId}`;
      await expect
        .poll(async () => (await getJson<{ current: unknown }>(page, `${base}/field-map`)).current !== null, { timeout: 200_000, interval: 1000 })
        .toBe(true);
      const rows = (await getJson<ExchangePage>(page, `${base}/exchanges?limit=1000`)).rows;
      const retried = rows.find((r) => (r.damagedResponseFrameIds ?? []).length > 0)!;
      const requesterLock = rows.find((r) => r.station.address === 0x22 && r.call.code === 42)!;
      const register = rows.find((r) => r.call.code === 35)!;

      // the exchange detail of the retried read: its damaged answer, a link to that frame
      await page.goto(`${baseUrl}/rigs/${rigId}/captures/${captureId}/frames/${retried.requestFrameId}`);
      const detail = page.getByTestId('frame-exchange');
      await detail.getByTestId('damaged-answer').filter({ hasText: "The server's answer arrived damaged (bad FCS) and the station sent the request again" }).waitFor();
      await detail.getByRole('list', { name: 'Frames of this exchange' }).getByRole('link', { name: 'damaged answer' }).waitFor();
      await shot(page, 'exchange-damaged-answer');

      // the refused lock: a line naming the holder and what the server answered, linking to the holder's lock exchange
      await page.goto(`${baseUrl}/rigs/${rigId}/captures/${captureId}/frames/${requesterLock.requestFrameId}`);
      const lockLine = page.getByTestId('frame-exchange').getByTestId('lock-conflict');
      await expect.poll(() => lockLine.innerText()).toMatch(/^Lock conflict on record 4: Registry desk held the lock this exchange asked for; the server refused it\./);
      const holder = requesterLock.lockConflicts![0].otherExchangeId!;
      expect(await lockLine.getByRole('link').getAttribute('href')).toBe(`/rigs/${rigId}/captures/${captureId}/schedule?station=all&ex=${holder}`);
      await shot(page, 'exchange-lock-conflict');

      // the timeline marks the damaged answer as the retried exchange's
      // (the timeline draws only the rows in view: open it at the retried exchange)
      await page.goto(`${baseUrl}/rigs/${rigId}/captures/${captureId}/timeline?at=${retried.tRequest}`);
      const marker = page.locator(`[data-call-role="damaged-response"][data-exchange-id="${retried.id}"]`);
      await marker.first().waitFor();
      expect(await marker.first().getAttribute('aria-label')).toMatch(/^damaged answer: .*damaged answer, retried, open in the schedule$/);

      // Recovered files: where each size came from, the lock conflict on the file
      await page.getByRole('navigation', { name: 'Capture views' }).getByRole('link', { name: 'Recovered files', exact: true }).click();
      const registerRow = page.locator('[data-testid="recovered-file"][data-file="REGISTER.DAT"]');
      const source = registerRow.getByTestId('size-source');
      await expect.poll(() => source.innerText()).toBe(`end known · size from the compute-file-size answer of exchange #${register.id}`);
      expect(await source.getByRole('link').getAttribute('href')).toBe(`/rigs/${rigId}/captures/${captureId}/schedule?station=all&ex=${register.id}`);
      await expect
        .poll(() => page.locator('[data-testid="recovered-file"][data-file="PARISH.DAT"]').getByTestId('size-source').innerText())
        .toMatch(/^end known · size from the open answer \(its record count, extent and module\) of exchange #\d+$/);
      const accounts = page.locator('[data-testid="recovered-file"][data-file="ACCOUNTS.DAT"]');
      await accounts.getByTestId('file-lock-conflicts').filter({ hasText: '1 lock conflict' }).waitFor();
      await accounts.getByRole('button', { name: /^Exchanges/ }).click();
      const conflict = page.getByTestId('file-lock-conflict');
      await expect.poll(() => conflict.innerText()).toMatch(/^record 4: Registry desk \(exchange #\d+\) held the lock, Treasurer desk \(exchange #\d+\) asked for it; refused$/);
      await shot(page, 'recovered-files-size-and-locks');
    } finally {
      await context.close();
    }
    // the decode queues behind the demo captures the server decodes at start
  }, 300_000);
});
