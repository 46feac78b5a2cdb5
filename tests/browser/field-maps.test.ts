import { readFileSync } from 'node:fs';
import { afterAll, beforeAll, describe, expect, inject, it } from 'vitest';
import type { Browser, Page } from 'playwright-core';
import { launchBrowser, newPage, stepShots, unique } from './support/browser';
import { allowConsole } from './support/console';
import { signInAsDemo } from './support/flows';

const baseUrl = inject('baseUrl');
const DEMO_RIG = 'Wrenfield Parish Office, 1983';
/** the copy the first test makes and saves as version 2 */
let copiedMapUrl = '';

let browser: Browser;
beforeAll(async () => {
  browser = await launchBrowser();
});
afterAll(async () => {
  await browser?.close();
});

/** The seed decodes the demo captures in the background; waits (through the API the pages use) for one to be decoded. */
async function waitForDecodedDemoCapture(page: Page): Promise<number> {
  return page.evaluate(async (rigName) => {
    const rigs = (await (await fetch('/api/rigs')).json()) as { id: number; name: string }[];
    const rig = rigs.find((r) => r.name === rigName);
    if (!rig) throw new Error(`no rig "${rigName}"`);
    const deadline = Date.now() + 150_000;
    for (;;) {
      const captures = (await (await fetch(`/api/rigs/${rig.id}/captures`)).json()) as { status: string }[];
      if (captures.some((c) => c.status === 'decoded')) return rig.id;
      if (Date.now() > deadline) throw new Error('no demo capture was decoded in time');
      await new Promise((r) => setTimeout(r, 1000));
    }
  }, DEMO_RIG);
}

describe('field-map editor', () => {
  it('copies the built-in map, adds a field seen in the preview, saves version 2, shows the diff and writes the field into the write-up', async () => {
    const { context, page } = await newPage(browser);
    const shot = stepShots('field-maps');
    try {
      await signInAsDemo(page, baseUrl, 'analyst@demo.test');
      const rigId = await waitForDecodedDemoCapture(page);

      await page.goto(`${baseUrl}/rigs/${rigId}`);
      await page.getByRole('link', { name: 'Field maps', exact: true }).click();
      const list = page.getByRole('list', { name: 'Field maps' });
      await list.getByRole('listitem').first().waitFor();
      expect(await list.getByRole('listitem').first().textContent()).toContain('CP/M call envelope');
      expect(await list.getByRole('listitem').first().textContent()).toContain('built-in, read-only');
      await shot(page, 'list');

      const name = unique('Wrenfield envelope');
      await page.getByRole('button', { name: 'Copy CP/M call envelope' }).click();
      await page.getByLabel('Name of the copy').fill(name);
      await page.getByRole('button', { name: 'Create the copy' }).click();
      await page.getByLabel('Map name').waitFor();
      expect(await page.getByLabel('Map name').inputValue()).toBe(name);
      copiedMapUrl = page.url();

      // the preview reads the latest decoded capture's first I frame with the draft
      const decoded = page.getByRole('table', { name: 'Decoded values' });
      await decoded.getByRole('row').nth(1).waitFor();
      expect(await decoded.getByRole('cell', { name: 'probe', exact: true }).count()).toBe(0);
      // every octet of the frame, as the frame inspector shows it (not cut at the timeline's 64)
      const preview = page.getByRole('region', { name: 'Preview' });
      const caption = await preview.getByText(/^Frame \d+ · /).textContent();
      const shownId = Number(/^Frame (\d+) · /.exec(caption ?? '')![1]);
      const octets = await page.getByLabel('Preview octets').locator('span').allTextContents();
      const captureId = await page.getByLabel('Preview capture').inputValue();
      const inspected = await page.evaluate(async (url) => ((await (await fetch(url)).json()) as { frame: { hexAll: string } }).frame.hexAll, `/api/rigs/${rigId}/captures/${captureId}/frames/${shownId}`);
      expect(octets.join('')).toBe(inspected.toUpperCase());
      expect(await page.getByLabel('Preview frame', { exact: true }).inputValue()).toBe(String(shownId));
      await page.getByRole('button', { name: 'Show this layout' }).click();
      await shot(page, 'copied-with-preview');

      // a new field at octet 1 of the layout the preview uses
      const ids = page.getByLabel(/^Field \d+ id$/);
      const before = await ids.count();
      await page.getByRole('button', { name: 'Add a field' }).click();
      await expect.poll(() => ids.count()).toBe(before + 1);
      const n = before + 1;
      await page.getByLabel(`Field ${n} id`).fill('probe');
      await page.getByLabel(`Field ${n} name`).fill('Probe octet');
      await page.getByLabel(`Field ${n} offset`, { exact: true }).selectOption('fixed');
      await page.getByLabel(`Field ${n} offset octet`).fill('1');
      await page.getByLabel(`Field ${n} meaning`).fill('second octet, read again to check the preview');

      // a bad id is reported in place by the client-side validation
      await page.getByLabel(`Field ${n} id`).fill('9probe');
      await page.getByRole('list', { name: `Problems of field ${n}` }).getByText(/starting with a letter/).waitFor();
      expect(await page.getByRole('button', { name: 'Save version 2' }).isDisabled()).toBe(true);
      await shot(page, 'validation-in-place');
      await page.getByLabel(`Field ${n} id`).fill('probe');

      await decoded.getByRole('cell', { name: 'probe', exact: true }).waitFor();
      expect(await page.locator('[aria-label="Preview octets"] [data-field="probe"]').count()).toBe(1);
      await shot(page, 'preview-with-new-field');

      await page.getByRole('button', { name: 'Save version 2' }).click();
      await page.getByText('Saved version 2.').waitFor();
      // the version list is fetched again after the save: the selects show it once it arrives
      await expect.poll(() => page.getByLabel('Diff to version').inputValue(), { timeout: 15_000 }).toBe('2');
      expect(await page.getByLabel('Diff from version').inputValue()).toBe('1');
      const diff = page.getByLabel('Differences');
      await diff.getByText('Field added').waitFor();
      expect(await diff.textContent()).toMatch(/Field added\s*probe/);
      await page.getByLabel('Differences').scrollIntoViewIfNeeded();
      await shot(page, 'saved-with-diff');

      const [download] = await Promise.all([page.waitForEvent('download'), page.getByRole('link', { name: 'Protocol write-up' }).first().click()]);
      const path = await download.path();
      const markdown = readFileSync(path, 'utf8');
      expect(markdown).toContain(`# ${name} (version 2)`);
      expect(markdown).toMatch(/^\| 1 \| 1 \| Probe octet \| u8 \| {2}\| second octet, read again to check the preview \| {2}\|$/m);
    } finally {
      await context.close();
    }
  });

  it('tells the second of two people saving from the same version that someone saved first, and reloads that version', async () => {
    expect(copiedMapUrl).not.toBe('');
    const { context, page: first } = await newPage(browser);
    const shot = stepShots('field-maps-conflict');
    try {
      await signInAsDemo(first, baseUrl, 'analyst@demo.test');
      const second = await context.newPage();
      for (const page of [first, second]) {
        await page.goto(copiedMapUrl);
        await page.getByRole('button', { name: 'Save version 3' }).waitFor();
      }
      await first.getByLabel('Map name').fill('Saved first');
      await first.getByRole('button', { name: 'Save version 3' }).click();
      await first.getByText('Saved version 3.').waitFor();

      allowConsole(second, /status of 409 \(Conflict\) \(\/api\/rigs\/\d+\/field-maps\/\d+:/);
      await second.getByLabel('Map name').fill('Saved second');
      await second.getByRole('button', { name: 'Save version 3' }).click();
      await second.getByText('Someone saved version 3 since you opened it').waitFor();
      await shot(second, 'conflict');
      await second.getByRole('button', { name: 'Reload version 3 (drop my changes)' }).click();
      await second.getByText('Loaded version 3.').waitFor();
      expect(await second.getByLabel('Map name').inputValue()).toBe('Saved first');
    } finally {
      await context.close();
    }
  });

  it('says why the preview is empty on a rig without a decoded capture, and leads to the upload', async () => {
    const { context, page } = await newPage(browser);
    try {
      await signInAsDemo(page, baseUrl, 'analyst@demo.test');
      const rigId = await page.evaluate(async (name) => {
        const session = (await (await fetch('/api/session')).json()) as { csrfToken: string };
        const res = await fetch('/api/rigs', {
          method: 'POST',
          headers: { 'content-type': 'application/json', accept: 'application/json', 'x-csrf-token': session.csrfToken },
          body: JSON.stringify({ name, lineSettings: { bitRate: 19_200, encoding: 'nrzi', clockEdge: 'rising', bitOrder: 'lsb-first' } }),
        });
        return ((await res.json()) as { id: number }).id;
      }, unique('Empty bench'));
      await page.goto(`${baseUrl}/rigs/${rigId}/field-maps`);
      await page.getByRole('list', { name: 'Field maps' }).getByRole('link').first().click();
      const empty = page.getByTestId('preview-empty');
      await empty.getByText('No capture on this rig has decoded frames yet: the preview applies the map to a frame of one. Upload a capture and decode it.').waitFor();
      expect(await page.getByLabel('Preview capture').inputValue()).toBe('');
      await empty.getByRole('link', { name: 'Upload a capture' }).click();
      await page.waitForURL(`${baseUrl}/rigs/${rigId}/captures/new`);
    } finally {
      await context.close();
    }
  });

  it('shows a viewer the map without edit controls', async () => {
    const { context, page } = await newPage(browser);
    try {
      await signInAsDemo(page, baseUrl, 'viewer@demo.test');
      await page.goto(copiedMapUrl);
      await page.getByRole('table', { name: /^Fields of / }).waitFor();
      expect(await page.getByRole('button', { name: /^Save version/ }).count()).toBe(0);
      expect(await page.getByRole('button', { name: 'Add a field' }).count()).toBe(0);
      expect(await page.getByLabel(/^Field \d+ id$/).count()).toBe(0);
      await page.getByRole('link', { name: 'Protocol write-up' }).first().waitFor();

      // a frame typed by id (a supervisory frame, never among the preview's I frames) shows whole
      const captureId = await page.getByLabel('Preview capture').inputValue();
      const rigPath = new URL(copiedMapUrl).pathname.replace(/\/field-maps\/\d+$/, '');
      const rr = await page.evaluate(async (url) => {
        const page = (await (await fetch(url)).json()) as { rows: { id: number }[] };
        const detail = (await (await fetch(url.replace(/\/timeline\?.*$/, `/frames/${page.rows[0].id}`))).json()) as { frame: { hexAll: string } };
        return { id: page.rows[0].id, hexAll: detail.frame.hexAll };
      }, `/api${rigPath}/captures/${captureId}/timeline?kind=S&limit=1&events=0`);
      await page.getByLabel('Preview frame id').fill(String(rr.id));
      await page.getByRole('button', { name: 'Show', exact: true }).click();
      const preview = page.getByRole('region', { name: 'Preview' });
      await preview.getByText(new RegExp(`^Frame ${rr.id} · `)).waitFor();
      expect((await preview.getByLabel('Preview octets').locator('span').allTextContents()).join('')).toBe(rr.hexAll.toUpperCase());
      expect(await page.getByLabel('Preview frame', { exact: true }).inputValue()).toBe(String(rr.id));

      await page.goto(copiedMapUrl.replace(/\/\d+$/, ''));
      await page.getByRole('list', { name: 'Field maps' }).getByRole('listitem').first().waitFor();
      expect(await page.getByRole('button', { name: /^Copy / }).count()).toBe(0);
    } finally {
      await context.close();
    }
  });

  it('exports the draft as JSON and imports a changed copy, marking its problems in place', async () => {
    expect(copiedMapUrl).not.toBe('');
    const { context, page } = await newPage(browser);
    const shot = stepShots('field-maps-import');
    try {
      await signInAsDemo(page, baseUrl, 'analyst@demo.test');
      await page.goto(copiedMapUrl);
      const [exported] = await Promise.all([page.waitForEvent('download'), page.getByRole('button', { name: 'Export JSON' }).click()]);
      const doc = JSON.parse(readFileSync(await exported.path(), 'utf8')) as { name: string; layouts: { fields: { id: string; type: string; length?: unknown }[] }[] };
      expect(doc.layouts.length).toBeGreaterThan(1);

      const input = page.getByLabel('Import a field map JSON file');
      await input.setInputFiles({ name: 'notes.txt', mimeType: 'text/plain', buffer: Buffer.from('not a map') });
      await page.getByText(/^notes\.txt is not JSON/).waitFor();

      // a u8 field is one octet; say it is three
      doc.layouts[0].fields[0].length = 3;
      doc.name = 'Imported envelope';
      await input.setInputFiles({ name: 'envelope.json', mimeType: 'application/json', buffer: Buffer.from(JSON.stringify(doc)) });
      await page.getByText('Imported envelope.json with 1 problem(s) marked below.').waitFor();
      expect(await page.getByLabel('Map name').inputValue()).toBe('Imported envelope');
      await page.getByRole('list', { name: 'Problems of field 1' }).getByText('a u8 field is 1 octet(s) long').waitFor();
      expect(await page.getByRole('button', { name: /^Save version/ }).isDisabled()).toBe(true);
      await shot(page, 'imported-with-problem');
    } finally {
      await context.close();
    }
  });
});
