import { mkdtempSync, rmSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { afterAll, beforeAll, describe, expect, inject, it } from 'vitest';
import type { Browser, Page } from 'playwright-core';
import type { ExchangePage, FaultDeskView } from '../../shared/schemas';
import { writeClockedVcd } from './captures-fixtures';
import { launchBrowser, newPage, stepShots } from './support/browser';
import { CLOCKED, REGISTRY_VCD, getJson, openDemoCapture, openTab, waitForDemo } from './support/demo';
import { signInAsDemo } from './support/flows';

const baseUrl = inject('baseUrl');
let browser: Browser;
let dir = '';

beforeAll(async () => {
  browser = await launchBrowser();
  dir = mkdtempSync(join(tmpdir(), 'flagline-inspector-'));
});
afterAll(async () => {
  await browser?.close();
  if (dir) rmSync(dir, { recursive: true, force: true });
});


/** The waveform's lane labels, band labels and axis ends, as drawn. */
async function waveformTexts(page: Page): Promise<string[]> {
  const svg = page.getByTestId('waveform').locator('svg');
  await svg.waitFor();
  return svg.locator('text').allTextContents();
}

describe('the frame inspector', () => {
  it('reads a request frame field by field, shades the octets of the field pointed at, and links every frame of its exchange', async () => {
    const shot = stepShots('inspector-call-decode');
    const { context, page } = await newPage(browser);
    try {
      await signInAsDemo(page, baseUrl, 'viewer@demo.test');
      const { rigId, ids } = await waitForDemo(page, [CLOCKED]);
      const base = `/rigs/${rigId}/captures/${ids[CLOCKED]}`;
      const boot = (await getJson<ExchangePage>(page, `/api${base}/exchanges?limit=5&call=112`)).rows.find((r) => r.outcome === 'answered' && r.responseFrameIds.length > 0)!;

      // the permalink a colleague sent: the boot request of the registry desk
      await page.goto(`${baseUrl}${base}/frames/${boot.requestFrameId}`);
      const decode = page.getByTestId('call-decode');
      await decode.getByText(/^Request · boot load \(0x70\) · tag \d+/).waitFor();
      const fields = decode.getByTestId('call-field');
      expect(await fields.count()).toBeGreaterThan(3);
      await shot(page, 'request');

      // pointing at the tag shades exactly its octets in the hex view, and their titles name it
      const tag = fields.filter({ hasText: 'tag' }).first();
      const octets = (await tag.getByRole('cell').nth(1).innerText()).trim();
      await tag.hover();
      const active = page.locator('[data-testid="hex-view"] [data-active]');
      await expect.poll(() => active.count()).toBe(1);
      expect(await active.first().getAttribute('title')).toBe(`tag (Information), octet ${octets}`);
      // and the other way round: pointing at an octet marks its field's row
      await page.locator(`[data-testid="hex-view"] [title$=", octet ${Number(octets) + 1}"]`).hover();
      await expect.poll(() => decode.locator('[data-testid="call-field"][data-active]').count()).toBe(1);
      await shot(page, 'field-shaded');

      // the exchange: this frame marked, the answer a click away
      const exchange = page.getByTestId('frame-exchange');
      await exchange.getByText('request (this frame)').waitFor();
      await exchange.getByRole('link', { name: 'answer', exact: true }).click();
      await page.waitForURL(new RegExp(`/frames/${boot.responseFrameIds[0]}$`));
      await decode.getByText(/^Answer · boot load \(0x70\) · .*status 0x00 ok$/).waitFor();
      // a value shown with its meaning, not as a bare number
      expect(await decode.getByTestId('call-field').filter({ hasText: 'status' }).first().innerText()).toMatch(/\bok\b/);
      await exchange.getByText('answer (this frame)').waitFor();
      await shot(page, 'answer');

      // and the whole exchange on the schedule, brought into view, selected and opened
      await exchange.getByRole('link', { name: 'Open the exchange in the schedule →' }).click();
      await page.waitForURL(/\/schedule\?/);
      expect(new URL(page.url()).searchParams.get('ex')).toBe(String(boot.id));
      await page.getByTestId('exchange-panel').waitFor();
      await expect.poll(() => page.getByTestId('schedule-canvas').locator('..').getAttribute('data-selected-x')).not.toBeNull();
      await shot(page, 'in-schedule');
    } finally {
      await context.close();
    }
  });

  it('after a bad FCS, names the flipped bit beside the probing cautions, and opens the full cautions from there', async () => {
    const shot = stepShots('inspector-bad-fcs');
    const { context, page } = await newPage(browser);
    try {
      await signInAsDemo(page, baseUrl, 'viewer@demo.test');
      const { rigId, ids } = await waitForDemo(page, [CLOCKED], { callLayer: false });
      const desk = await getJson<FaultDeskView>(page, `/api/rigs/${rigId}/captures/${ids[CLOCKED]}/faults?cause=bad-fcs-explained`);
      await openDemoCapture(page, baseUrl, CLOCKED);
      await openTab(page, 'Fault desk');
      await page.getByRole('link', { name: `Open frame ${desk.rows[0].seq} on ${desk.rows[0].link} in the inspector` }).click();
      await page.getByTestId('diagnosis').filter({ hasText: /bit \d+ is flipped/ }).waitFor();
      const cautions = page.getByRole('note', { name: 'Probing cautions' });
      for (const words of ['±12 V', 'mains-powered', 'CRT high voltage', 'local codes']) await cautions.getByText(words, { exact: false }).waitFor();
      // a damaged frame carries no call: the call panel says why rather than staying empty
      await page.getByTestId('call-reason').filter({ hasText: 'damaged' }).waitFor();
      await shot(page, 'diagnosis-and-cautions');

      await cautions.getByRole('link', { name: 'Probing safely, in full →' }).click();
      await page.getByRole('heading', { level: 1, name: 'Probing old serial hardware' }).waitFor();
      await page.getByRole('heading', { name: 'Probing safely' }).waitFor();
      await shot(page, 'full-cautions');
    } finally {
      await context.close();
    }
  });

  it('says what residue means for a frame, and draws a 1 ps-unit capture’s waveform across the whole frame and both flags', async () => {
    const shot = stepShots('inspector-residue-fine-unit');
    const capture = writeClockedVcd(dir, 12, { timescale: '1 ps', residueAt: [4], rtsOnce: true, name: 'fine-unit-residue.vcd' });
    const { context, page } = await newPage(browser);
    try {
      await signInAsDemo(page, baseUrl, 'analyst@demo.test');
      const { rigId } = await waitForDemo(page, [], { callLayer: false });
      await page.goto(`${baseUrl}/rigs/${rigId}/captures/new`);
      await page.getByLabel('Capture file').setInputFiles(capture.path);
      await page.getByTestId('detected-format').filter({ hasText: 'value change dump' }).waitFor();
      // the time base comes from the file, in units, not as "1000000000000" samples a second
      await page.getByTestId('time-resolution').filter({ hasText: '1 ps per step' }).waitFor();
      const form = page.getByRole('form', { name: 'Channel roles' });
      // a line that rose once says "1 change"
      await form.getByRole('listitem', { name: 'Channel rts' }).getByText('1 change', { exact: false }).waitFor();
      expect(await form.getByRole('listitem', { name: 'Channel rts' }).innerText()).not.toContain('1 changes');
      await form.getByLabel('Direction of txd').selectOption('to-server');
      await form.getByLabel('Direction of rxd').selectOption('from-server');
      // each detail select shows its whole choice
      for (const label of ['Direction of txd', 'Station on txd', 'Direction of rxd', 'Station on rxd']) {
        const fits = await form.getByLabel(label).evaluate((el: HTMLSelectElement) => {
          const probe = document.createElement('span');
          probe.style.font = getComputedStyle(el).font;
          probe.style.whiteSpace = 'pre';
          probe.textContent = el.selectedOptions[0].text;
          document.body.append(probe);
          const text = probe.getBoundingClientRect().width;
          probe.remove();
          const style = getComputedStyle(el);
          // room left of the arrow: the box less its padding
          return text <= el.clientWidth - parseFloat(style.paddingLeft) - parseFloat(style.paddingRight);
        });
        expect(fits, label).toBe(true);
      }
      await shot(page, 'channel-roles');
      await form.getByRole('button', { name: 'Save roles and decode' }).click();
      await page.getByText('Frames over time').waitFor({ timeout: 30_000 });

      await openTab(page, 'Timeline');
      await page.getByRole('button', { name: 'residue', exact: true }).click();
      await page.getByTestId('match-count').filter({ hasText: /^1 row matches$/ }).waitFor();
      const grid = page.getByRole('grid', { name: 'Frames and line events' });
      await grid.locator('[data-frame-id]').first().dblclick();
      await page.waitForURL(/\/frames\/\d+$/);

      const note = page.getByTestId('residue-note');
      await note.getByText(/^Residue: \d+ bits between the flags, \d+ whole octets and 3 bits over$/).waitFor();
      // the FCS over the whole octets checks out, and the panel says so in the words of this frame
      expect(await note.innerText()).toContain('the 3 bits after them');
      expect(await page.getByTestId('fcs-panel').innerText()).not.toContain('arrived as sent.');

      // the waveform: both flags, the frame's start and end, an axis in line time from the frame's first bit
      const texts = await waveformTexts(page);
      expect(texts.filter((t) => t === 'flag')).toHaveLength(2);
      expect(texts).toContain('frame start');
      expect(texts).toContain('frame end');
      const start = await page.getByTestId('waveform-axis-start').textContent();
      const end = await page.getByTestId('waveform-axis-end').textContent();
      expect(start).toMatch(/^−\d+(\.\d+)? µs$/);
      expect(end).toMatch(/^\+\d+(\.\d+)? (µs|ms)$/);
      await page.getByTestId('waveform').scrollIntoViewIfNeeded();
      await shot(page, 'residue-and-waveform');
    } finally {
      await context.close();
    }
  });

  it('draws the waveform of a capture with a coarse time unit (one step per sample) across the whole frame', async () => {
    const shot = stepShots('inspector-coarse-unit');
    const { context, page } = await newPage(browser);
    try {
      await signInAsDemo(page, baseUrl, 'viewer@demo.test');
      await waitForDemo(page, [REGISTRY_VCD], { callLayer: false });
      await openDemoCapture(page, baseUrl, REGISTRY_VCD);
      await openTab(page, 'Channel roles');
      await page.getByTestId('time-resolution').filter({ hasText: '100 ns per step' }).waitFor();
      await openTab(page, 'Timeline');
      await page.getByRole('button', { name: 'I', exact: true }).click();
      const grid = page.getByRole('grid', { name: 'Frames and line events' });
      await grid.locator('[data-frame-id]').nth(2).dblclick();
      await page.waitForURL(/\/frames\/\d+$/);
      const texts = await waveformTexts(page);
      expect(texts.filter((t) => t === 'flag')).toHaveLength(2);
      expect(texts).toContain('frame end');
      await page.getByTestId('waveform').scrollIntoViewIfNeeded();
      await shot(page, 'waveform');
    } finally {
      await context.close();
    }
  });
});
