import { afterAll, beforeAll, describe, expect, inject, it } from 'vitest';
import type { Browser, Page } from 'playwright-core';
import { launchBrowser, newPage, stepShots, unique } from './support/browser';
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

const leaveDialog = (page: Page) => page.getByRole('alertdialog', { name: 'Leave without saving?' });

describe('edits not yet saved', () => {
  it('asks before the field-map editor drops unsaved edits, keeps them on “stay”, and shows value names in words in the version diff', async () => {
    const shot = stepShots('unsaved-field-map');
    const { context, page } = await newPage(browser);
    try {
      await signInAsDemo(page, baseUrl, 'analyst@demo.test');
      const { rigId } = await waitForDemo(page, [CLOCKED]);
      await page.goto(`${baseUrl}/rigs/${rigId}/field-maps`);
      const name = unique('Unsaved envelope');
      await page.getByRole('button', { name: 'Copy CP/M call envelope' }).click();
      await page.getByLabel('Name of the copy').fill(name);
      await page.getByRole('button', { name: 'Create the copy' }).click();
      await page.getByLabel('Map name').waitFor();

      await page.getByLabel('Map name').fill(`${name} (draft)`);
      await page.getByRole('link', { name: '← Field maps' }).click();
      const dialog = leaveDialog(page);
      await dialog.waitFor();
      expect(await dialog.innerText()).toContain(`The field map “${name} (draft)” has changes you have not saved.`);
      await shot(page, 'asked');
      await dialog.getByRole('button', { name: 'Stay on this page' }).click();
      await expect.poll(() => dialog.count()).toBe(0);
      expect(await page.getByLabel('Map name').inputValue()).toBe(`${name} (draft)`);
      expect(new URL(page.url()).pathname).toMatch(/\/field-maps\/\d+$/);

      // value names saved and compared: the diff says them as the editor writes them, not as JSON
      const values = page.getByLabel('Field 1 value names');
      await values.fill(`${await values.inputValue()}\n250 = bench test call`.trim());
      await page.getByRole('button', { name: 'Save version 2' }).click();
      await page.getByText('Saved version 2.').waitFor();
      const diff = page.getByLabel('Differences');
      await diff.getByText('250 = bench test call', { exact: false }).waitFor();
      const text = await diff.innerText();
      expect(text).toMatch(/values: .* → .*250 = bench test call/);
      expect(text).not.toMatch(/[{}"]/);
      await diff.scrollIntoViewIfNeeded();
      await shot(page, 'diff-in-words');

      // saved: leaving asks nothing; unsaved again: "leave" drops the edit
      await page.getByLabel('Map name').fill(`${name} (second draft)`);
      await page.getByRole('link', { name: '← Field maps' }).click();
      await dialog.getByRole('button', { name: 'Leave and lose the changes' }).click();
      await page.getByRole('list', { name: 'Field maps' }).waitFor();
      expect(await page.getByRole('list', { name: 'Field maps' }).innerText()).not.toContain('(second draft)');
    } finally {
      await context.close();
    }
  });

  it('asks before a typed note is lost, and shows a new note without an “edited” mark', async () => {
    const shot = stepShots('unsaved-note');
    const { context, page } = await newPage(browser);
    try {
      await signInAsDemo(page, baseUrl, 'viewer@demo.test');
      await waitForDemo(page, [CLOCKED], { callLayer: false });
      await openDemoCapture(page, baseUrl, CLOCKED);
      await openTab(page, 'Notes');
      const body = unique('The treasurer desk answers late on Mondays');
      await page.getByLabel('Note', { exact: true }).fill(body);
      await openTab(page, 'Overview');
      await leaveDialog(page).getByText('Your note on the capture has changes you have not saved.').waitFor();
      await shot(page, 'asked');
      await leaveDialog(page).getByRole('button', { name: 'Stay on this page' }).click();
      await page.getByRole('button', { name: 'Add note' }).click();
      const note = page.getByTestId('note').filter({ hasText: body });
      await note.waitFor();
      expect(await note.innerText()).not.toContain('edited');
      await shot(page, 'added');
      // nothing typed any more: the tab changes at once
      await openTab(page, 'Overview');
      await page.getByTestId('overview-stats').waitFor();
      expect(await leaveDialog(page).count()).toBe(0);
    } finally {
      await context.close();
    }
  });
});
