import { mkdtempSync, rmSync, writeFileSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { afterAll, beforeAll, describe, expect, inject, it } from 'vitest';
import type { Browser, Page } from 'playwright-core';
import { launchBrowser, newPage, stepShots } from './support/browser';
import { allowConsole } from './support/console';
import { signInAsDemo } from './support/flows';
import { writeClockedVcd } from './captures-fixtures';

const baseUrl = inject('baseUrl');
const DEMO_RIG = 'Wrenfield Parish Office, 1983';
let browser: Browser;
const dirs: string[] = [];

/** a temp folder of one test's own, for the files it uploads */
function freshDir(): string {
  const dir = mkdtempSync(join(tmpdir(), 'flagline-captures-'));
  dirs.push(dir);
  return dir;
}

beforeAll(async () => {
  browser = await launchBrowser();
});
afterAll(async () => {
  await browser?.close();
  for (const dir of dirs) rmSync(dir, { recursive: true, force: true });
});

async function openDemoRigCaptures(page: Page): Promise<number> {
  await page.goto(`${baseUrl}/`);
  await page.getByRole('link').filter({ hasText: DEMO_RIG }).first().click();
  await page.getByRole('heading', { level: 1, name: DEMO_RIG }).waitFor();
  await page.getByRole('link', { name: 'Captures', exact: true }).click();
  await page.getByRole('heading', { name: 'Captures' }).waitFor();
  return Number(new URL(page.url()).pathname.split('/')[2]);
}

describe('captures in the browser', () => {
  it('uploads an encoded capture, decodes it to 100 %, filters the timeline to damaged frames and shows the single-bit diagnosis and waveform', async () => {
    const shot = stepShots('capture-workbench');
    const capture = writeClockedVcd(freshDir());
    const { context, page } = await newPage(browser);
    try {
      await signInAsDemo(page, baseUrl, 'analyst@demo.test');
      await openDemoRigCaptures(page);
      await page.getByRole('link', { name: 'Upload a capture' }).click();
      await page.getByRole('heading', { name: 'Probing safely' }).waitFor();
      await shot(page, 'upload-page');

      await page.getByLabel('Capture file').setInputFiles(capture.path);
      await page.getByTestId('detected-format').filter({ hasText: 'value change dump' }).waitFor();
      const form = page.getByRole('form', { name: 'Channel roles' });
      // prefilled from detection and the rig's line settings (800 kbit/s NRZI, rising edge)
      expect(await form.getByLabel('Clock', { exact: true }).inputValue()).toBe('clk');
      expect(await form.getByLabel('Encoding').inputValue()).toBe('nrzi');
      expect(await form.getByLabel('Use of txd').inputValue()).toBe('data');
      expect(await form.getByLabel('Use of rxd').inputValue()).toBe('data');
      await form.getByLabel('Direction of txd').selectOption('to-server');
      await form.getByLabel('Label of txd').fill('port 1, desk → server');
      await form.getByLabel('Direction of rxd').selectOption('from-server');
      await shot(page, 'channel-roles');

      // a link cannot also be the clock: the form says so beside the channel before anything is sent
      await form.getByLabel('Clock', { exact: true }).selectOption('');
      await form.getByLabel('Bit rate (bit/s)').fill('');
      await form.getByRole('button', { name: 'Save roles and decode' }).click();
      await form.getByText('Without a clock channel, enter the nominal bit rate').waitFor();
      await shot(page, 'field-error');
      await form.getByLabel('Clock', { exact: true }).selectOption('clk');

      await form.getByRole('button', { name: 'Save roles and decode' }).click();
      await page.locator('[role="progressbar"][aria-label="File read"][aria-valuenow="100"]').waitFor({ timeout: 30_000 });
      await shot(page, 'decoded-100');

      await page.getByText('Frames over time').waitFor({ timeout: 15_000 });
      const damagedStat = page.locator('div').filter({ has: page.getByText('Damaged frames', { exact: true }) }).last();
      await expect.poll(() => damagedStat.innerText(), { timeout: 15_000 }).toContain(String(capture.damaged.length));
      await shot(page, 'overview');

      await page.getByRole('link', { name: 'Timeline', exact: true }).click();
      const grid = page.getByRole('grid', { name: 'Frames and line events' });
      await grid.getByRole('row').first().waitFor();
      await shot(page, 'timeline');

      // "/" goes to the search box; a hex pattern finds the requests ("OPEN" = 4f 50 45 4e), a malformed one is explained in place.
      // 23 of the 24: the first damaged request has its flipped bit in the "P" (octet 3), the second in the "E" the ?? skips.
      await page.getByLabel('Search in').selectOption('hex');
      await grid.focus();
      await page.keyboard.press('/');
      expect(await page.getByLabel('Search frames').evaluate((el) => el === document.activeElement)).toBe(true);
      await page.keyboard.type('4f 5');
      await page.keyboard.press('Enter');
      await page.getByText('Use pairs of hex digits like "14 00", and ?? for any byte.').waitFor();
      await page.getByLabel('Search frames').fill('4f 50 ?? 4e');
      await page.keyboard.press('Enter');
      await page.getByTestId('match-count').filter({ hasText: '23 rows match' }).waitFor();
      expect(new URL(page.url()).searchParams.get('hex')).toBe('4f 50 ?? 4e');
      await shot(page, 'timeline-hex-search');
      await page.getByRole('button', { name: 'Clear filters' }).click();
      await page.getByTestId('match-count').filter({ hasText: /^1\d\d rows match/ }).waitFor();

      // a jump to a time starts the list there, and keeps that row on top while earlier rows load above it
      await page.getByLabel('Go to time (s)').fill('0.007');
      await page.getByRole('button', { name: 'Go', exact: true }).click();
      await page.getByTestId('loaded-range').filter({ hasText: /showing 0\.007/ }).waitFor();
      await page.waitForTimeout(1500);
      await expect.poll(() => page.getByTestId('loaded-range').innerText(), { timeout: 15_000 }).toMatch(/showing 0\.007/);
      expect(await grid.evaluate((el) => el.scrollTop)).toBeGreaterThan(0);
      // near the end only a few rows follow; the rows loaded above must not push them out of view
      await page.getByLabel('Go to time (s)').fill('0.0143');
      await page.getByRole('button', { name: 'Go', exact: true }).click();
      await page.waitForTimeout(1500);
      await expect.poll(() => page.getByTestId('loaded-range').innerText(), { timeout: 15_000 }).toMatch(/– 0\.014[34]\d+ s/);

      await page.getByRole('button', { name: 'Damaged only' }).click();
      await page.waitForURL(/status=bad-fcs%2Cabort%2Cshort%2Cresidue|status=bad-fcs,abort,short,residue/);
      await page.getByTestId('match-count').filter({ hasText: `${capture.damaged.length} rows match` }).waitFor();
      const rows = grid.locator('[data-frame-id]');
      await expect.poll(() => rows.count()).toBe(capture.damaged.length);
      for (const text of await rows.allInnerTexts()) expect(text).toContain('bad FCS');
      await shot(page, 'timeline-damaged');

      // keyboard: select the first damaged frame, n moves to the next one, Enter opens it
      await rows.first().click();
      await expect.poll(() => new URL(page.url()).searchParams.get('sel')).toBe(await rows.nth(0).getAttribute('data-frame-id'));
      await page.keyboard.press('n');
      await expect.poll(() => new URL(page.url()).searchParams.get('sel')).toBe(await rows.nth(1).getAttribute('data-frame-id'));
      await page.keyboard.press('p');
      await expect.poll(() => new URL(page.url()).searchParams.get('sel')).toBe(await rows.nth(0).getAttribute('data-frame-id'));
      await page.keyboard.press('Enter');
      await page.waitForURL(/\/frames\/\d+$/);

      const first = capture.damaged[0];
      await page.getByTestId('diagnosis').filter({ hasText: `bit ${first.flippedBit} is flipped` }).waitFor();
      expect(await page.locator('[data-testid="bit-view"] [data-suspect]').innerText()).toMatch(/^[01]$/);
      expect(await page.locator('[data-testid="hex-view"] [data-suspect]').count()).toBe(1);
      await page.getByTestId('waveform').locator('svg').waitFor();
      await page.getByTestId('waveform-suspect').waitFor();
      const lanes = await page.getByTestId('waveform').locator('path[data-lane]').count();
      expect(lanes).toBe(4); // clk, txd, rxd, rts
      await shot(page, 'inspector');

      await page.getByRole('link', { name: '← Timeline' }).click();
      await page.waitForURL(/\/timeline\?/);
      expect(new URL(page.url()).searchParams.get('status')).toBe('bad-fcs,abort,short,residue');
    } finally {
      await context.close();
    }
  });

  it('says in words why a file that is not a capture was refused', async () => {
    const notCapture = join(freshDir(), 'shopping-list.txt');
    writeFileSync(notCapture, 'eggs\nflour\nlamp oil\n');
    const { context, page } = await newPage(browser);
    try {
      await signInAsDemo(page, baseUrl, 'analyst@demo.test');
      const rigId = await openDemoRigCaptures(page);
      await page.goto(`${baseUrl}/rigs/${rigId}/captures/new`);
      allowConsole(page, /status of 422 \(Unprocessable Entity\) \(\/api\/rigs\/\d+\/captures:/);
      await page.getByLabel('Capture file').setInputFiles(notCapture);
      const alert = page.getByRole('alert').filter({ hasText: 'This file is not a capture Flagline can read' });
      await alert.waitFor();
      // said once, with what to do next, and nothing stored
      expect((await alert.innerText()).match(/not a capture/g)).toHaveLength(1);
      await alert.getByText('Nothing was stored.').waitFor();
      await stepShots('capture-refused')(page, 'not-a-capture');
      expect(new URL(page.url()).pathname).toBe(`/rigs/${rigId}/captures/new`);
      await alert.getByRole('button', { name: 'Clear this message' }).click();
      await expect.poll(() => page.getByRole('alert').count()).toBe(0);
    } finally {
      await context.close();
    }
  });

  it('shows a viewer no upload control, and the server refuses a viewer upload anyway', async () => {
    const { context, page } = await newPage(browser);
    try {
      await signInAsDemo(page, baseUrl, 'viewer@demo.test');
      const rigId = await openDemoRigCaptures(page);
      expect(await page.getByRole('link', { name: 'Upload a capture' }).count()).toBe(0);
      await page.goto(`${baseUrl}/rigs/${rigId}/captures/new`);
      await page.getByRole('heading', { name: 'Uploading needs an analyst' }).waitFor();
      expect(await page.getByLabel('Capture file').count()).toBe(0);
      await stepShots('capture-viewer')(page, 'no-upload');

      allowConsole(page, /status of 403 \(Forbidden\) \(\/api\/rigs\/\d+\/captures:/);
      const status = await page.evaluate(async (id) => {
        const session = await (await fetch('/api/session')).json();
        const body = new FormData();
        body.append('file', new Blob(['$timescale 1 ns $end\n$enddefinitions $end\n']), 'x.vcd');
        const res = await fetch(`/api/rigs/${id}/captures`, { method: 'POST', body, headers: { 'x-csrf-token': session.csrfToken } });
        return res.status;
      }, rigId);
      expect(status).toBe(403);
    } finally {
      await context.close();
    }
  });
});
