import { afterAll, beforeAll, describe, expect, inject, it } from 'vitest';
import type { Browser } from 'playwright-core';
import { launchBrowser, newPage, stepShots, unique } from './support/browser';
import { allowConsole } from './support/console';
import { DEMO_OWNER, addStation, createRig, signInAsDemo } from './support/flows';

const baseUrl = inject('baseUrl');
let browser: Browser;

beforeAll(async () => {
  browser = await launchBrowser();
});
afterAll(async () => {
  await browser?.close();
});

describe('rigs in the browser', () => {
  it('signs the demo owner in from the sign-in page, returns to the page asked for, and creates a rig with two stations', async () => {
    const shot = stepShots('create-rig');
    const { context, page } = await newPage(browser);
    try {
      await page.goto(`${baseUrl}/rigs/new`);
      await page.getByRole('heading', { name: 'Sign in' }).waitFor();
      expect(new URL(page.url()).pathname).toBe('/sign-in');
      await page.getByRole('heading', { name: 'Demo accounts' }).waitFor();
      await shot(page, 'sign-in');

      await signInAsDemo(page, baseUrl, DEMO_OWNER);
      await page.getByRole('heading', { name: 'New rig' }).waitFor();
      expect(new URL(page.url()).pathname).toBe('/rigs/new');

      const rigName = unique('Bench rig');
      const rigId = await createRig(page, baseUrl, rigName);
      await addStation(page, '0x10', 'Vault file server', 'Server');
      await addStation(page, '33', 'Desk two', 'Station');
      await shot(page, 'rig-with-stations');

      const rows = page.getByRole('row');
      await expect.poll(() => rows.filter({ hasText: 'Vault file server' }).innerText(), { timeout: 15_000 }).toMatch(/0x10[\s\S]*Server/);
      await expect.poll(() => rows.filter({ hasText: 'Desk two' }).innerText(), { timeout: 15_000 }).toMatch(/0x21 \(33\)[\s\S]*Station/);

      await page.getByRole('link', { name: 'Rigs', exact: true }).click();
      const card = page.getByRole('link').filter({ hasText: rigName });
      await expect.poll(() => card.innerText(), { timeout: 15_000 }).toContain('2 stations');
      await expect.poll(() => card.innerText(), { timeout: 15_000 }).toContain('owner');
      await shot(page, 'rig-list');
      expect(rigId).toBeGreaterThan(0);
    } finally {
      await context.close();
    }
  });

  it('shows the per-field message for a station address of 300 and the server conflict for a taken address', async () => {
    const shot = stepShots('station-errors');
    const { context, page } = await newPage(browser);
    try {
      await signInAsDemo(page, baseUrl, DEMO_OWNER);
      await createRig(page, baseUrl, unique('Faulty form rig'));
      const form = page.getByRole('form', { name: 'Add a station' });

      await form.getByLabel('Address').fill('300');
      await form.getByLabel('Name').fill('Too far');
      await form.getByRole('button', { name: 'Add station' }).click();
      await form.getByText('Enter an address 0–255').waitFor();
      expect(await form.getByLabel('Address').getAttribute('aria-invalid')).toBe('true');
      await page.getByText('No stations yet.').waitFor();
      await shot(page, 'address-out-of-range');

      await addStation(page, '0x10', 'First server', 'Server');
      // the browser logs the server's 409 for the taken address this step provokes
      allowConsole(page, /status of 409 \(Conflict\) \(\/api\/rigs\/\d+\/stations:/);
      await form.getByLabel('Address').fill('0x10');
      await form.getByLabel('Name').fill('Second claim');
      await form.getByRole('button', { name: 'Add station' }).click();
      await form.getByRole('alert').filter({ hasText: /0x10 is already used/ }).waitFor();
      expect(await page.getByRole('cell', { name: 'Second claim' }).count()).toBe(0);
      await shot(page, 'address-taken');
    } finally {
      await context.close();
    }
  });

  it('edits a station in the roster, deletes another, saves changed line settings and deletes the rig', async () => {
    const shot = stepShots('edit-rig');
    const { context, page } = await newPage(browser);
    try {
      await signInAsDemo(page, baseUrl, DEMO_OWNER);
      const rigName = unique('Edited rig');
      await createRig(page, baseUrl, rigName);
      await addStation(page, '0x10', 'Old server', 'Server');
      await addStation(page, '0x21', 'Spare desk', 'Station');

      await page.getByRole('button', { name: 'Edit Old server' }).click();
      const edit = page.getByRole('form', { name: 'Edit station 0x10' });
      expect(await edit.getByLabel('Address').inputValue()).toBe('0x10');
      await edit.getByLabel('Address').fill('0x11');
      await edit.getByLabel('Name').fill('New server');
      await edit.getByRole('button', { name: 'Save station' }).click();
      await page.getByRole('cell', { name: 'New server', exact: true }).waitFor();
      await expect.poll(() => page.getByRole('row').filter({ hasText: 'New server' }).innerText(), { timeout: 15_000 }).toMatch(/0x11/);

      await page.getByRole('button', { name: 'Delete Spare desk' }).click();
      await page.getByRole('button', { name: 'Delete', exact: true }).click();
      await page.getByRole('cell', { name: 'Spare desk', exact: true }).waitFor({ state: 'detached' });
      await shot(page, 'roster-after-edits');

      await page.getByRole('link', { name: 'Line settings' }).click();
      await page.getByLabel('Bit rate (bit/s)').fill('twelve');
      await page.getByRole('button', { name: 'Save settings' }).click();
      await page.getByText('Enter a bit rate').or(page.getByText('Use a whole number')).first().waitFor();
      await page.getByLabel('Bit rate (bit/s)').fill('250000');
      await page.getByLabel('Bit order').selectOption('msb-first');
      await page.getByRole('button', { name: 'Save settings' }).click();
      await page.getByText('Settings saved.').waitFor();
      await page.getByText('250 kbit/s · NRZI · rising edge · MSB first').waitFor();
      await shot(page, 'settings-saved');

      await page.getByRole('button', { name: 'Delete rig…' }).click();
      await page.getByRole('button', { name: `Yes, delete “${rigName}”` }).click();
      await page.getByRole('heading', { name: 'Your rigs' }).waitFor();
      expect(await page.getByRole('link').filter({ hasText: rigName }).count()).toBe(0);
    } finally {
      await context.close();
    }
  });

  it('shows a not-found page for a rig that does not exist', async () => {
    const { context, page } = await newPage(browser);
    try {
      await signInAsDemo(page, baseUrl, DEMO_OWNER);
      // asking for a rig that does not exist: the browser logs the 404 this test provokes
      allowConsole(page, /status of 404 \(Not Found\) \(\/api\/rigs\/999999:/);
      await page.goto(`${baseUrl}/rigs/999999`);
      await page.getByRole('heading', { name: 'No such rig' }).waitFor();
      await page.goto(`${baseUrl}/rigs/not-a-number/settings`);
      await page.getByRole('heading', { name: 'No such rig' }).waitFor();
      await stepShots('unknown-rig')(page, 'not-found');
    } finally {
      await context.close();
    }
  });
});
