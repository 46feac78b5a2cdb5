import { afterAll, beforeAll, describe, expect, inject, it } from 'vitest';
import type { Browser } from 'playwright-core';
import { launchBrowser, newPage, stepShots, unique } from './support/browser';
import { signInAsDemo } from './support/flows';

const baseUrl = inject('baseUrl');
const DEMO_RIG = 'Wrenfield Parish Office, 1983';

let browser: Browser;
beforeAll(async () => {
  browser = await launchBrowser();
});
afterAll(async () => {
  await browser?.close();
});

describe('field notes in the field-map editor', () => {
  it('lets an analyst add a note on a field of a copied map, and a viewer read it there', async () => {
    const shot = stepShots('field-notes');
    const text = unique('The record number counts from 0 on this rig');
    let mapUrl!: string;
    let fieldPath!: string;

    const analyst = await newPage(browser);
    try {
      const page = analyst.page;
      await signInAsDemo(page, baseUrl, 'analyst@demo.test');
      const rigId = await page.evaluate(async (rigName) => {
        const rigs = (await (await fetch('/api/rigs')).json()) as { id: number; name: string }[];
        const rig = rigs.find((r) => r.name === rigName);
        if (!rig) throw new Error(`no rig "${rigName}"`);
        return rig.id;
      }, DEMO_RIG);
      await page.goto(`${baseUrl}/rigs/${rigId}/field-maps`);
      await page.getByRole('button', { name: 'Copy CP/M call envelope' }).click();
      await page.getByLabel('Name of the copy').fill(unique('Noted envelope'));
      await page.getByRole('button', { name: 'Create the copy' }).click();
      await page.getByLabel('Map name').waitFor();
      mapUrl = page.url();

      const toggle = page.getByRole('button', { name: 'Notes (0)' }).first();
      await toggle.click();
      const panel = page.getByRole('region', { name: /^Notes on / });
      await panel.waitFor();
      fieldPath = ((await panel.getAttribute('aria-label')) ?? '').replace(/^Notes on /, '');
      expect(fieldPath).toMatch(/^[^.]+\.[^.]+$/);
      expect(await panel.textContent()).toContain('No notes on this field yet.');

      // an empty note is refused in place, before any request
      await panel.getByRole('button', { name: 'Add note' }).click();
      await panel.getByText('Write something in the note').waitFor();

      await panel.getByLabel('New note').fill(text);
      await panel.getByRole('button', { name: 'Add note' }).click();
      await panel.getByTestId('field-note').filter({ hasText: text }).waitFor();
      await page.getByRole('button', { name: 'Notes (1)' }).first().waitFor();
      expect(await panel.getByTestId('field-note').first().textContent()).toContain('Edit');
      await shot(page, 'analyst-added-note');
    } finally {
      await analyst.context.close();
    }

    const viewer = await newPage(browser);
    try {
      const page = viewer.page;
      await signInAsDemo(page, baseUrl, 'viewer@demo.test');
      await page.goto(mapUrl);
      // viewers get the read-only table, with the same notes toggle
      await page.getByRole('table', { name: /^Fields of / }).waitFor();
      await page.getByRole('button', { name: 'Notes (1)' }).click();
      const panel = page.getByRole('region', { name: `Notes on ${fieldPath}` });
      const note = panel.getByTestId('field-note').filter({ hasText: text });
      await note.waitFor();
      // someone else's note: the viewer may neither edit nor delete it
      expect(await note.getByRole('button', { name: 'Edit' }).count()).toBe(0);
      expect(await note.getByRole('button', { name: 'Delete' }).count()).toBe(0);
      await shot(page, 'viewer-reads-note');
    } finally {
      await viewer.context.close();
    }
  });
});
