import { mkdtempSync, rmSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { afterAll, beforeAll, describe, expect, inject, it } from 'vitest';
import type { Browser, Page } from 'playwright-core';
import { writeClockedVcd } from './captures-fixtures';
import { launchBrowser, newPage, stepShots } from './support/browser';
import { allowConsole } from './support/console';
import { DEMO_RIG, waitForDemo } from './support/demo';
import { DEMO_OWNER, signInAsDemo } from './support/flows';

const baseUrl = inject('baseUrl');
let browser: Browser;
let dir = '';

beforeAll(async () => {
  browser = await launchBrowser();
  dir = mkdtempSync(join(tmpdir(), 'flagline-removal-'));
});
afterAll(async () => {
  await browser?.close();
  if (dir) rmSync(dir, { recursive: true, force: true });
});

/** Uploads a small capture through the upload page and returns its id (the page lands on its channel roles). */
async function upload(page: Page, rigId: number, name: string): Promise<number> {
  await page.goto(`${baseUrl}/rigs/${rigId}/captures/new`);
  await page.getByLabel('Capture file').setInputFiles(writeClockedVcd(dir, 3, { name }).path);
  await page.getByTestId('detected-format').waitFor();
  return Number(new URL(page.url()).pathname.split('/')[4]);
}

/** What the API answers for the capture now (the browser logs the 404 of a removed one). */
const captureStatus = (page: Page, rigId: number, id: number) => page.evaluate(async (p) => (await fetch(p)).status, `/api/rigs/${rigId}/captures/${id}`);

describe('removing captures', () => {
  it('lets the owner delete a capture from the list, and an upload left without channel roles from its own page', async () => {
    const shot = stepShots('capture-removal');
    const { context, page } = await newPage(browser);
    try {
      await signInAsDemo(page, baseUrl, DEMO_OWNER);
      const { rigId } = await waitForDemo(page, [], { callLayer: false });
      const listed = await upload(page, rigId, 'listed-then-deleted.vcd');
      const abandoned = await upload(page, rigId, 'abandoned-upload.vcd');

      // from the list: one deliberate second click, then the row, its file and rows are gone
      await page.goto(`${baseUrl}/rigs/${rigId}/captures`);
      const row = page.locator('[data-testid="capture-row"][data-capture="listed-then-deleted.vcd"]');
      await row.getByRole('button', { name: 'Delete the capture listed-then-deleted.vcd' }).click();
      await shot(page, 'confirm-in-list');
      await row.getByRole('button', { name: 'Yes, delete “listed-then-deleted.vcd”' }).click();
      await expect.poll(() => row.count()).toBe(0);
      allowConsole(page, new RegExp(`status of 404 \\(Not Found\\) \\(/api/rigs/${rigId}/captures/(${listed}|${abandoned}):`));
      expect(await captureStatus(page, rigId, listed)).toBe(404);

      // an upload nobody set up: its channel-roles page offers the removal
      await page.goto(`${baseUrl}/rigs/${rigId}/captures/${abandoned}/setup`);
      const panel = page.locator('section').filter({ has: page.getByRole('heading', { name: 'Delete this capture' }) });
      await panel.getByText('A file that does not decode can be removed here.').waitFor();
      await panel.getByRole('button', { name: 'Delete the capture abandoned-upload.vcd' }).click();
      await panel.getByRole('button', { name: 'Yes, delete “abandoned-upload.vcd”' }).click();
      await page.waitForURL(new RegExp(`/rigs/${rigId}/captures$`));
      await page.locator('[data-testid="capture-row"]').first().waitFor();
      expect(await page.locator('[data-testid="capture-row"][data-capture="abandoned-upload.vcd"]').count()).toBe(0);
      expect(await captureStatus(page, rigId, abandoned)).toBe(404);
      await shot(page, 'both-gone');
    } finally {
      await context.close();
    }
  });

  it('offers an analyst no way to remove a capture: only owners remove them', async () => {
    const { context, page } = await newPage(browser);
    try {
      await signInAsDemo(page, baseUrl, 'analyst@demo.test');
      await waitForDemo(page, [], { callLayer: false });
      await page.getByRole('link').filter({ hasText: DEMO_RIG }).first().click();
      await page.getByRole('link', { name: 'Captures', exact: true }).click();
      await page.locator('[data-testid="capture-row"]').first().waitFor();
      expect(await page.getByRole('button', { name: /^Delete the capture / }).count()).toBe(0);
    } finally {
      await context.close();
    }
  });
});
