import { afterAll, beforeAll, describe, expect, inject, it } from 'vitest';
import type { Browser, Page } from 'playwright-core';
import { launchBrowser, newPage, stepShots, unique } from './support/browser';
import { signInAsDemo } from './support/flows';

const baseUrl = inject('baseUrl');
const DEMO_RIG = 'Wrenfield Parish Office, 1983';
const CLOCKED = 'wrenfield-session-clocked.raw';

let browser: Browser;
beforeAll(async () => {
  browser = await launchBrowser();
});
afterAll(async () => {
  await browser?.close();
});

/** Waits (through the API the pages use) for the demo capture to be decoded; its first frame with an information field. */
async function firstInfoFrame(page: Page): Promise<{ path: string; seq: number; link: string }> {
  return page.evaluate(
    async ({ rigName, name }) => {
      const rigs = (await (await fetch('/api/rigs')).json()) as { id: number; name: string }[];
      const rig = rigs.find((r) => r.name === rigName);
      if (!rig) throw new Error(`no rig "${rigName}"`);
      const deadline = Date.now() + 150_000;
      for (;;) {
        const captures = (await (await fetch(`/api/rigs/${rig.id}/captures`)).json()) as { id: number; name: string; status: string }[];
        const c = captures.find((x) => x.name === name);
        if (c?.status === 'decoded') {
          const page = (await (await fetch(`/api/rigs/${rig.id}/captures/${c.id}/timeline?events=0&status=ok&limit=50`)).json()) as {
            rows: { type: string; id: number; seq: number; link: string; infoLength: number }[];
          };
          const f = page.rows.find((r) => r.type === 'frame' && r.infoLength >= 4);
          if (!f) throw new Error('no frame with an information field in the first page');
          return { path: `/rigs/${rig.id}/captures/${c.id}/frames/${f.id}`, seq: f.seq, link: f.link };
        }
        if (Date.now() > deadline) throw new Error(`the demo capture was not decoded in time: ${c?.status}`);
        await new Promise((r) => setTimeout(r, 1000));
      }
    },
    { rigName: DEMO_RIG, name: CLOCKED },
  );
}

describe('notes in the browser', () => {
  it('pins a note to a byte range of a frame as the analyst, and the viewer reads it in the inspector and finds it on the notes tab', async () => {
    const shot = stepShots('notes-byte-range');
    const text = unique('Record number field, little-endian');
    const analyst = await newPage(browser);
    const viewer = await newPage(browser);
    try {
      const { page } = analyst;
      await signInAsDemo(page, baseUrl, 'analyst@demo.test');
      const frame = await firstInfoFrame(page);
      await page.goto(`${baseUrl}${frame.path}`);
      await page.getByRole('heading', { name: `Frame ${frame.seq} on ${frame.link}` }).waitFor();
      const form = page.getByRole('form', { name: 'Add a note' });
      await form.getByLabel('Pin to').selectOption('bytes');
      await form.getByLabel('First byte').fill('2');
      await form.getByLabel('Last byte').fill('9999');
      await form.getByLabel('Note').fill(text);
      await form.getByRole('button', { name: 'Add note' }).click();
      await expect.poll(() => form.getByText(/^The frame has \d+ bytes/).count()).toBe(1);
      await shot(page, 'range-outside-frame');
      // drag-select octets 2–3 in the hex view: the range fields follow the selection
      await page.evaluate(() => {
        const cells = [...document.querySelectorAll<HTMLElement>('[data-testid="hex-view"] span[title]')];
        const cell = (i: number) => cells.find((c) => c.title.endsWith(`, octet ${i}`))!;
        const range = document.createRange();
        range.setStart(cell(2).firstChild!, 0);
        range.setEnd(cell(3).firstChild!, 2);
        window.getSelection()!.removeAllRanges();
        window.getSelection()!.addRange(range);
      });
      await expect.poll(() => form.getByLabel('Last byte').inputValue()).toBe('3');
      expect(await form.getByLabel('First byte').inputValue()).toBe('2');
      await form.getByText('From your selection in the hex view.').waitFor();
      await shot(page, 'range-from-hex-selection');
      await form.getByRole('button', { name: 'Add note' }).click();
      const mine = page.getByTestId('note').filter({ hasText: text });
      await mine.waitFor();
      await expect.poll(() => mine.innerText()).toContain(`bytes 2–3 of frame ${frame.seq} on ${frame.link}`);
      expect(await mine.getByRole('button', { name: 'Edit' }).count()).toBe(1);
      await shot(page, 'analyst-pinned-note');

      await page.goto(`${baseUrl}${frame.path.replace(/frames\/\d+$/, 'timeline')}?status=ok&link=${frame.link}&sel=${frame.path.split('/').at(-1)}`);
      const marker = page.getByTestId('note-marker').first();
      await marker.waitFor();
      expect(await marker.getAttribute('title')).toBe('1 note on this frame');
      await shot(page, 'timeline-marks-noted-frame');

      const v = viewer.page;
      await signInAsDemo(v, baseUrl, 'viewer@demo.test');
      await v.goto(`${baseUrl}${frame.path}`);
      const seen = v.getByTestId('note').filter({ hasText: text });
      await seen.waitFor();
      const shown = await seen.innerText();
      expect(shown).toContain('Tobias Quill');
      expect(shown).toContain(`bytes 2–3 of frame ${frame.seq} on ${frame.link}`);
      expect(await seen.getByRole('button', { name: 'Edit' }).count()).toBe(0);
      expect(await seen.getByRole('button', { name: 'Delete' }).count()).toBe(0);
      await shot(v, 'viewer-reads-note');

      await v.getByRole('link', { name: 'Notes', exact: true }).click();
      await v.getByLabel('Find in notes').fill(text.split(' ').at(-1)!);
      await v.getByRole('button', { name: 'Find' }).click();
      await expect.poll(() => new URL(v.url()).searchParams.get('q')).toBe(text.split(' ').at(-1));
      const found = v.getByTestId('note');
      await expect.poll(() => found.count()).toBe(1);
      await found.getByRole('link', { name: `bytes 2–3 of frame ${frame.seq} on ${frame.link}` }).click();
      await v.getByRole('heading', { name: `Frame ${frame.seq} on ${frame.link}` }).waitFor();
      await shot(v, 'viewer-followed-note-to-frame');
    } finally {
      await analyst.context.close();
      await viewer.context.close();
    }
  }, 240_000);
  it('lets the viewer comment on the whole capture from the notes tab, then edit and delete the comment', async () => {
    const shot = stepShots('notes-capture-comment');
    const text = unique('Cable to port 3 reseated before this capture');
    const { context, page } = await newPage(browser);
    try {
      await signInAsDemo(page, baseUrl, 'viewer@demo.test');
      const frame = await firstInfoFrame(page);
      await page.goto(`${baseUrl}${frame.path.replace(/frames\/\d+$/, 'notes')}`);
      await page.getByRole('heading', { name: 'Notes on this capture' }).waitFor();
      await page.getByRole('button', { name: 'Add note' }).click();
      await page.getByText('Write something in the note').waitFor();
      await page.getByLabel('Note', { exact: true }).fill(text);
      await page.getByRole('button', { name: 'Add note' }).click();
      const mine = page.getByTestId('note').filter({ hasText: text });
      await mine.waitFor();
      expect(await mine.innerText()).toContain('Mina Hartree');
      expect(await mine.innerText()).toContain('the capture');
      await shot(page, 'comment-added');

      await mine.getByRole('button', { name: 'Edit' }).click();
      await mine.getByLabel('Edit note').fill(`${text} (twice)`);
      await mine.getByRole('button', { name: 'Save' }).click();
      const edited = page.getByTestId('note').filter({ hasText: `${text} (twice)` });
      await edited.waitFor();
      await expect.poll(() => edited.innerText()).toContain('(edited');
      await shot(page, 'comment-edited');

      page.once('dialog', (d) => void d.accept());
      await edited.getByRole('button', { name: 'Delete' }).click();
      await expect.poll(() => page.getByTestId('note').filter({ hasText: text }).count()).toBe(0);
      await shot(page, 'comment-deleted');
    } finally {
      await context.close();
    }
  }, 240_000);
});
