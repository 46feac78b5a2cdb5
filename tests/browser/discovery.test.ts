import { createHash } from 'node:crypto';
import { mkdtempSync, readFileSync, rmSync, writeFileSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join, resolve } from 'node:path';
import { afterAll, beforeAll, describe, expect, inject, it } from 'vitest';
import type { Browser, Page } from 'playwright-core';
import { launchBrowser, newPage, stepShots, unique } from './support/browser';
import { signInAsDemo } from './support/flows';

// A newcomer who knows nothing of the line: a rig made with the wrong line settings (NRZ, 9 600
// bit/s), a capture of each demo protocol uploaded, every default accepted. The settings finder
// must fill in the right encoding, rate and link directions; for the second protocol, whose
// envelope the built-in map does not know, a map started from field hints must recover its files.

const baseUrl = inject('baseUrl');
const samples = resolve(import.meta.dirname, '../../samples');

interface Expected {
  frames: Record<string, Record<string, number>>;
  exchanges: { total: number };
  files: { key: string; recordCount: number; missing: number[]; sha256: string }[];
}
interface Entry {
  file: string;
  settings: { links: { channel: string; direction: string }[] };
  expected: Expected;
}
const manifest = JSON.parse(readFileSync(join(samples, 'manifest.json'), 'utf8')) as { captures: Entry[]; otherRigs: { captures: Entry[] }[] };
const entry = (file: string) => [...manifest.captures, ...manifest.otherRigs.flatMap((r) => r.captures)].find((c) => c.file === file)!;
const frameTotal = (e: Entry) => Object.values(e.expected.frames).reduce((n, l) => n + Object.values(l).reduce((a, b) => a + b, 0), 0);

let browser: Browser;
const dirs: string[] = [];
beforeAll(async () => {
  browser = await launchBrowser();
});
afterAll(async () => {
  await browser?.close();
  for (const d of dirs) rmSync(d, { recursive: true, force: true });
});

/** A rig whose line settings are wrong for both demo protocols: the finder must not trust them. */
async function newRigWithWrongSettings(page: Page, name: string): Promise<number> {
  await page.goto(`${baseUrl}/rigs/new`);
  await page.getByLabel('Rig name').fill(name);
  await page.getByLabel('Bit rate (bit/s)').fill('9600');
  await page.getByLabel('Encoding').selectOption('nrz');
  await page.getByRole('button', { name: 'Create rig' }).click();
  await page.getByRole('heading', { level: 1, name, exact: true }).waitFor();
  return Number(new URL(page.url()).pathname.split('/')[2]);
}

/** Uploads a file, waits for the finder's answer and accepts every default; lands on the overview. */
async function uploadAndAcceptDefaults(page: Page, rigId: number, file: string, shot: (p: Page, l: string) => Promise<void>): Promise<void> {
  await page.goto(`${baseUrl}/rigs/${rigId}/captures/new`);
  await page.getByLabel('Capture file').setInputFiles(file);
  await page.getByTestId('finder-result').waitFor({ timeout: 30_000 });
  await shot(page, 'settings-found');
  const form = page.getByRole('form', { name: 'Channel roles' });
  await form.getByRole('button', { name: 'Save roles and decode' }).click();
  // the decode queue is shared with the demo's own captures: allow it time
  await page.getByText('Frames over time').waitFor({ timeout: 120_000 });
}

async function expectFiles(page: Page, e: Expected) {
  await page.getByRole('link', { name: 'Recovered files', exact: true }).click();
  for (const f of e.files) {
    const name = f.key.split(':')[1];
    const row = page.locator(`[data-testid="recovered-file"][data-file="${name}"]`);
    await row.waitFor({ timeout: 30_000 });
    if (f.missing.length === 0) {
      const [download] = await Promise.all([page.waitForEvent('download'), row.getByRole('link', { name: `Download ${name}` }).click()]);
      const bytes = readFileSync((await download.path())!);
      // the encoder's own hash of what it wrote (samples/manifest.json)
      expect(createHash('sha256').update(bytes).digest('hex'), name).toBe(f.sha256);
    }
  }
}

describe('zero-configuration decoding in the browser', () => {
  it('a capture of the parish office protocol, every default accepted: right settings, directions, exchanges and files', async () => {
    const shot = stepShots('discovery-parish');
    const e = entry('wrenfield-choir-print.csv');
    const { context, page } = await newPage(browser);
    try {
      await signInAsDemo(page, baseUrl, 'analyst@demo.test');
      const rigId = await newRigWithWrongSettings(page, unique('Bench rig'));
      await page.goto(`${baseUrl}/rigs/${rigId}/captures/new`);
      await page.getByLabel('Capture file').setInputFiles(join(samples, e.file));
      const found = page.getByTestId('finder-result');
      await found.waitFor({ timeout: 30_000 });
      await expect.poll(() => found.innerText()).toContain('NRZI');
      const form = page.getByRole('form', { name: 'Channel roles' });
      // the rig said NRZ at 9 600 bit/s; the line says otherwise, and the form follows the line
      expect(await form.getByLabel('Encoding').inputValue()).toBe('nrzi');
      expect(Math.abs(Number(await form.getByLabel('Bit rate (bit/s)').inputValue()) / 800_000 - 1)).toBeLessThan(0.05);
      for (const l of e.settings.links) expect(await form.getByLabel(`Direction of ${l.channel}`).inputValue(), l.channel).toBe(l.direction);
      await found.getByText(/Other settings tried/).click();
      await found.getByRole('list', { name: 'Ranked settings' }).waitFor();
      await shot(page, 'settings-found');
      await form.getByRole('button', { name: 'Save roles and decode' }).click();
      await page.getByText('Frames over time').waitFor({ timeout: 120_000 });
      const frames = page.getByTestId('overview-stats');
      await expect.poll(() => frames.innerText()).toContain(String(frameTotal(e)));
      await shot(page, 'overview');

      await page.getByRole('link', { name: 'Schedule', exact: true }).click();
      await page.getByTestId('schedule-canvas').waitFor({ timeout: 30_000 });
      await page.getByTestId('exchange-row').first().waitFor({ timeout: 30_000 });
      await shot(page, 'schedule');
      await expectFiles(page, e.expected);
      await shot(page, 'files');
    } finally {
      await context.close();
    }
  }, 240_000);

  it('a capture of the Saltmarsh protocol: directions inferred, then a field map started from hints decodes its exchanges and files', async () => {
    const shot = stepShots('discovery-saltmarsh');
    const e = entry('saltmarsh-office.framelog');
    const { context, page } = await newPage(browser);
    try {
      await signInAsDemo(page, baseUrl, 'analyst@demo.test');
      const rigId = await newRigWithWrongSettings(page, unique('Ferry rig'));
      await uploadAndAcceptDefaults(page, rigId, join(samples, e.file), shot);
      const captureId = Number(new URL(page.url()).pathname.split('/')[4]);
      await expect.poll(() => page.getByTestId('overview-stats').innerText()).toContain(String(frameTotal(e)));
      await shot(page, 'overview-built-in-map');

      await page.getByRole('link', { name: 'Field hints', exact: true }).click();
      await page.getByTestId('hint-counts').waitFor({ timeout: 30_000 });
      await page.getByRole('table', { name: /^Hints: Requests, selector/ }).first().waitFor();
      await shot(page, 'field-hints');
      await page.getByLabel('Name of the new map').fill('Ferry envelope, from hints');
      await page.getByRole('button', { name: 'Start a field map from these hints' }).click();
      await page.waitForURL(/\/field-maps\/\d+/);
      const mapId = Number(new URL(page.url()).pathname.split('/')[4]);
      await expect.poll(() => page.getByLabel('Map name').inputValue()).toBe('Ferry envelope, from hints');
      // the draft has a layout per call and direction, with the hinted roles
      await page.getByText('call 0x31 (request)').first().waitFor();
      await shot(page, 'draft-map-in-editor');

      await page.goto(`${baseUrl}/rigs/${rigId}/captures/${captureId}`);
      const choice = page.locator('#field-map-choice');
      await choice.getByLabel('Map').selectOption(String(mapId));
      await choice.getByRole('button', { name: 'Decode the calls with this map' }).click();
      await expect.poll(() => choice.innerText(), { timeout: 30_000 }).toContain(`${e.expected.exchanges.total} exchanges`);
      await shot(page, 'map-chosen');
      await expectFiles(page, e.expected);
      await shot(page, 'files');
    } finally {
      await context.close();
    }
  }, 240_000);

  it('a wrong encoding and then swapped directions: the overview says what is wrong and one click decodes again right', async () => {
    const shot = stepShots('discovery-diagnosis');
    const e = entry('wrenfield-choir-print.csv');
    const { context, page } = await newPage(browser);
    try {
      await signInAsDemo(page, baseUrl, 'analyst@demo.test');
      const rigId = await newRigWithWrongSettings(page, unique('Wrong rig'));
      await page.goto(`${baseUrl}/rigs/${rigId}/captures/new`);
      await page.getByLabel('Capture file').setInputFiles(join(samples, e.file));
      const found = page.getByTestId('finder-result');
      await found.waitFor({ timeout: 30_000 });
      // the analyst overrides the finder with a ranked alternative: NRZ, which gives no good frame here
      await found.getByText(/Other settings tried/).click();
      await found.getByRole('button', { name: /^Use NRZ, no clock, .*not inverted, FCS-16$/ }).click();
      const form = page.getByRole('form', { name: 'Channel roles' });
      expect(await form.getByLabel('Encoding').inputValue()).toBe('nrz');
      await form.getByRole('button', { name: 'Save roles and decode' }).click();
      const diagnosis = page.getByTestId('decode-diagnosis');
      await diagnosis.waitFor({ timeout: 120_000 });
      await expect.poll(() => diagnosis.innerText()).toMatch(/line settings look wrong/);
      expect(await diagnosis.innerText()).toContain('NRZI');
      await shot(page, 'wrong-encoding');
      await diagnosis.getByRole('button', { name: /^Decode again with NRZI/ }).click();
      // the decode page shows the progress, then the overview opens again
      await page.waitForURL(/\/setup$/);
      await page.waitForURL(/\/captures\/\d+$/, { timeout: 120_000 });
      await page.getByText('Frames over time').waitFor({ timeout: 30_000 });
      await expect.poll(() => page.getByTestId('overview-stats').innerText(), { timeout: 30_000 }).toContain(String(frameTotal(e)));
      await shot(page, 'decoded-again');

      // now the directions the wrong way round
      await page.getByRole('link', { name: 'Channel roles', exact: true }).click();
      const roles = page.getByRole('form', { name: 'Channel roles' });
      for (const l of e.settings.links) await roles.getByLabel(`Direction of ${l.channel}`).selectOption(l.direction === 'to-server' ? 'from-server' : 'to-server');
      await roles.getByRole('button', { name: 'Save roles and decode' }).click();
      await page.waitForURL(/\/captures\/\d+$/, { timeout: 120_000 });
      await page.getByText('Frames over time').waitFor({ timeout: 30_000 });
      const swapped = page.getByTestId('decode-diagnosis');
      await expect.poll(() => swapped.innerText(), { timeout: 30_000 }).toMatch(/directions look swapped/);
      await shot(page, 'swapped-directions');
      await swapped.getByRole('button', { name: 'Use the inferred directions and decode again' }).click();
      await page.waitForURL(/\/setup$/);
      await page.waitForURL(/\/captures\/\d+$/, { timeout: 120_000 });
      await page.getByText('Frames over time').waitFor({ timeout: 30_000 });
      await expect.poll(() => page.getByTestId('decode-diagnosis').count(), { timeout: 30_000 }).toBe(0);
      await page.getByRole('link', { name: 'Schedule', exact: true }).click();
      await page.getByTestId('schedule-canvas').waitFor({ timeout: 30_000 });
      await page.getByTestId('exchange-row').first().waitFor({ timeout: 30_000 });
      await shot(page, 'schedule-after-fix');
    } finally {
      await context.close();
    }
  }, 360_000);

  it('a capture with no frame under any setting: says what was tried and what to check, and the decode page says it too', async () => {
    const shot = stepShots('discovery-bad-input');
    const dir = mkdtempSync(join(tmpdir(), 'flagline-discovery-'));
    dirs.push(dir);
    // line noise: two channels toggling at random, no flags anywhere
    let seed = 7;
    const rnd = () => ((seed = (seed * 1103515245 + 12345) & 0x7fffffff) & 0xffff) / 0x10000;
    const rows = ['time,line_a,line_b'];
    for (let i = 0; i < 20_000; i++) rows.push(`${(i * 1e-6).toFixed(7)},${rnd() < 0.5 ? 1 : 0},${rnd() < 0.5 ? 1 : 0}`);
    const file = join(dir, 'noise.csv');
    writeFileSync(file, rows.join('\n'));
    const { context, page } = await newPage(browser);
    try {
      await signInAsDemo(page, baseUrl, 'analyst@demo.test');
      const rigId = await newRigWithWrongSettings(page, unique('Noise rig'));
      await page.goto(`${baseUrl}/rigs/${rigId}/captures/new`);
      await page.getByLabel('Capture file').setInputFiles(file);
      const nothing = page.getByTestId('finder-nothing');
      await nothing.waitFor({ timeout: 30_000 });
      const text = await nothing.innerText();
      expect(text).toContain('Tried:');
      expect(text).toContain('What to check:');
      expect(text).toMatch(/probe/i);
      // the form is still there, with the detection's guess, for the analyst to change
      const form = page.getByRole('form', { name: 'Channel roles' });
      await form.waitFor();
      await shot(page, 'nothing-found');
      await form.getByRole('button', { name: 'Save roles and decode' }).click();
      await page.getByTestId('decode-diagnosis').waitFor({ timeout: 120_000 });
      expect(await page.getByTestId('decode-diagnosis').innerText()).toContain('What to check:');
      await shot(page, 'decode-diagnosis');
    } finally {
      await context.close();
    }
  }, 240_000);
});
