import { createHash } from 'node:crypto';
import fs from 'node:fs';
import path from 'node:path';
import { afterAll, beforeAll, describe, expect, inject, it } from 'vitest';
import type { Browser, BrowserContext, Page } from 'playwright-core';
import { DecodedCaptureEncoder } from '../../shared/decoded-capture/encoder';
import { fingerprintLine, hexOf } from '../../shared/decoded-capture/lines';
import { payloadLength } from '../../server/runs/run-writer';
import { decoderOptions } from '../../shared/decoder-options';
import type { DecodedFrame } from '../../shared/decoder';
import { captureSettingsSchema, type CaptureSettings, type CaptureSummaryRow, type TimelineFrame, type TimelinePage } from '../../shared/schemas';
import { launchBrowser, newPage, stepShots } from './support/browser';
import { getJson, waitForDemo, type DemoIds } from './support/demo';
import { createRig, signInAsDemo } from './support/flows';

const baseUrl = inject('baseUrl');
const samples = path.resolve(import.meta.dirname, '../../samples');

interface SampleEntry {
  file: string;
  settings: CaptureSettings;
  /** decoded by the server when the demo starts (the Wrenfield rig's captures) */
  seeded: boolean;
}

function demoSamples(): SampleEntry[] {
  const m = JSON.parse(fs.readFileSync(path.join(samples, 'manifest.json'), 'utf8')) as {
    captures: { file: string; settings: unknown }[];
    otherRigs: { captures: { file: string; settings: unknown }[] }[];
  };
  return [
    ...m.captures.map((c) => ({ file: c.file, settings: captureSettingsSchema.parse(c.settings), seeded: true })),
    ...m.otherRigs.flatMap((r) => r.captures.map((c) => ({ file: c.file, settings: captureSettingsSchema.parse(c.settings), seeded: false }))),
  ];
}

/** What the server's own decoder gives for the file under the settings: the decode worker's options and code. */
function referenceDecode(file: string, settings: CaptureSettings) {
  const frames: DecodedFrame[] = [];
  const fingerprint = createHash('sha256');
  const enc = new DecodedCaptureEncoder(settings, decoderOptions(settings), {
    frame: (f) => {
      frames.push(f);
      fingerprint.update(fingerprintLine(f));
    },
  });
  const bytes = new Uint8Array(fs.readFileSync(path.join(samples, file)));
  for (let at = 0; at < bytes.length; at += 1 << 20) enc.push(bytes.subarray(at, at + (1 << 20)));
  expect(enc.finish()).toBeNull();
  return { frames, fingerprint: fingerprint.digest('hex') };
}

function byLinkStatus(frames: { link: string; status: string }[]): Record<string, Record<string, number>> {
  const out: Record<string, Record<string, number>> = {};
  for (const f of frames) {
    out[f.link] ??= {};
    out[f.link][f.status] = (out[f.link][f.status] ?? 0) + 1;
  }
  return out;
}

async function allFrames(page: Page, base: string): Promise<TimelineFrame[]> {
  const out: TimelineFrame[] = [];
  let cursor: string | null = null;
  do {
    const p: TimelinePage = await getJson<TimelinePage>(page, `${base}/timeline?limit=1000${cursor ? `&cursor=${encodeURIComponent(cursor)}` : ''}`);
    for (const r of p.rows) if (r.type === 'frame') out.push(r);
    cursor = p.nextCursor;
  } while (cursor);
  return out;
}

const payloadHex = (f: DecodedFrame) => hexOf(f.bytes.subarray(0, payloadLength(f)));

/** what the user types before the finder looks: raw samples carry no time base or channel names */
async function fillHints(page: Page, s: CaptureSettings) {
  const panel = page.getByTestId('local-decode');
  await panel.getByLabel('Sample rate').fill(s.format === 'raw' && s.sampleRate ? String(s.sampleRate) : '');
  await panel.getByLabel('Raw sample width').selectOption(s.format === 'raw' ? String(s.rawWidth) : 'auto');
  await panel.getByLabel('Channel names').fill(s.format === 'raw' || s.format === 'octets' ? s.channelNames.join(', ') : '');
  await panel.getByLabel('Bit rate').fill(s.format === 'octets' || s.format === 'framelog' ? String(s.bitRate ?? '') : '');
}

let browser: Browser;
beforeAll(async () => {
  browser = await launchBrowser();
});
afterAll(async () => {
  await browser?.close();
});

describe('decode in the browser before upload', () => {
  const entries = demoSamples();
  const shot = stepShots('local-decode');
  let context: BrowserContext;
  let page: Page;
  let demo: DemoIds;
  // the uploads go to a rig of their own: captures of the same names in the demo rig would confuse other tests
  let rigId: number;
  let vcdCapture: CaptureSummaryRow | null = null;

  beforeAll(async () => {
    ({ context, page } = await newPage(browser));
    await signInAsDemo(page, baseUrl, 'analyst@demo.test');
    demo = await waitForDemo(
      page,
      entries.filter((e) => e.seeded).map((e) => e.file),
    );
    rigId = await createRig(page, baseUrl, 'Decoded here');
    await page.goto(`${baseUrl}/rigs/${rigId}/captures/new`);
    await page.getByRole('radio', { name: 'Decode here first' }).click();
    await page.getByTestId('local-decode').waitFor();
    await shot(page, 'local-mode');
  });
  afterAll(async () => {
    await context?.close();
  });

  for (const entry of entries) {
    it(`decodes ${entry.file} in a worker with the server’s results and uploads only the frames`, async () => {
      await page.goto(`${baseUrl}/rigs/${rigId}/captures/new?mode=local`);
      await fillHints(page, entry.settings);
      await page.getByTestId('local-decode').getByLabel('Capture file').setInputFiles(path.join(samples, entry.file));
      // the first frames show while the decode runs, or at the latest with its result
      await page.getByTestId('local-frame').first().waitFor({ timeout: 30_000 });
      await page.getByTestId('local-result').waitFor({ timeout: 60_000 });
      if (entry.file === 'wrenfield-registry-boot.vcd') await shot(page, 'decoded-here');
      const shownCount = Number((await page.getByTestId('local-frame-count').textContent())!.replace(/\D/g, ''));
      const fingerprint = (await page.getByTestId('local-fingerprint').textContent())!.trim();

      await page.getByRole('button', { name: /Upload only the decoded frames/ }).click();
      await page.waitForURL(/\/captures\/\d+\/timeline/);
      const captureId = Number(new URL(page.url()).pathname.split('/')[4]);
      const base = `/api/rigs/${rigId}/captures/${captureId}`;
      const uploaded = await getJson<CaptureSummaryRow>(page, base);
      expect(uploaded.samplesKept).toBe(false);
      expect(uploaded.name).toBe(entry.file);
      expect(uploaded.sha256).toBe(createHash('sha256').update(fs.readFileSync(path.join(samples, entry.file))).digest('hex'));
      if (entry.file.endsWith('.vcd')) vcdCapture = uploaded;

      // the worker's frames are the server decoder's frames under the settings it found (bytes, times, FCS verdicts)
      const reference = referenceDecode(entry.file, uploaded.settings!);
      expect(shownCount).toBe(reference.frames.length);
      expect(fingerprint).toBe(reference.fingerprint.slice(0, 16));
      const stored = await allFrames(page, base);
      expect(stored.length).toBe(reference.frames.length);
      expect(byLinkStatus(stored)).toEqual(byLinkStatus(reference.frames));
      expect([stored[0].hex, stored.at(-1)!.hex]).toEqual([payloadHex(reference.frames[0]).slice(0, 128), payloadHex(reference.frames.at(-1)!).slice(0, 128)]);

      if (entry.seeded) {
        // and they are what the server's decode of the same file (the demo's, with the manifest's settings) stored
        const server = await allFrames(page, `/api/rigs/${demo.rigId}/captures/${demo.ids[entry.file]}`);
        expect(stored.length).toBe(server.length);
        expect(byLinkStatus(stored)).toEqual(byLinkStatus(server));
        expect([stored[0].hex, stored.at(-1)!.hex]).toEqual([server[0].hex, server.at(-1)!.hex]);
        expect(stored.map((f) => f.status).join()).toBe(server.map((f) => f.status).join());
      }
      await page.getByTestId('row-summary').first().waitFor();
    });
  }

  it('shows the timeline and exchanges of a capture whose samples stayed here, and says why there is no waveform', async () => {
    const vcd = vcdCapture!;
    expect(vcd).not.toBeNull();
    await page.goto(`${baseUrl}/rigs/${rigId}/captures/${vcd.id}/timeline`);
    await page.getByRole('heading', { level: 1, name: vcd.name }).waitFor();
    await page.getByTestId('row-summary').first().waitFor();
    await shot(page, 'timeline');
    await page.getByRole('navigation', { name: 'Capture views' }).getByRole('link', { name: 'Schedule', exact: true }).click();
    await page.getByTestId('exchange-row').first().waitFor();
    await shot(page, 'schedule');
    const [firstFrame] = await allFrames(page, `/api/rigs/${rigId}/captures/${vcd.id}`);
    await page.goto(`${baseUrl}/rigs/${rigId}/captures/${vcd.id}/frames/${firstFrame.id}`);
    await page.getByTestId('samples-elsewhere').waitFor();
    expect(await page.getByTestId('samples-elsewhere').textContent()).toContain("The samples stayed on the uploader's machine");
    await shot(page, 'inspector-no-samples');
    await page.goto(`${baseUrl}/rigs/${rigId}/captures/${vcd.id}/setup`);
    await page.getByTestId('samples-elsewhere').waitFor();
  });
});
