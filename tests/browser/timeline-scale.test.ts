import { mkdtempSync, rmSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { afterAll, beforeAll, describe, expect, inject, it } from 'vitest';
import type { Browser, Page } from 'playwright-core';
import { launchBrowser, newPage, stepShots } from './support/browser';
import { signInAsDemo } from './support/flows';
import { writeLargeFrameLog } from './captures-fixtures';

const baseUrl = inject('baseUrl');
const FRAMES = 200_000;
/** the fixture sends one frame every 0.5 ms */
const FRAME_SPACING = 0.0005;
let browser: Browser;
let dir = '';

beforeAll(async () => {
  browser = await launchBrowser();
});
afterAll(async () => {
  await browser?.close();
  if (dir) rmSync(dir, { recursive: true, force: true });
});

/** A full-page shot resizes the window, which scrolls the list back to its top; these keep the window as the user sees it. */
const viewShot = (page: Page, name: string) =>
  page.screenshot({
    path: join(import.meta.dirname, '../../test-artifacts', process.env.FLAGLINE_BROWSER_COLOR_SCHEME === 'dark' ? 'browser-dark' : 'browser', 'timeline-scale', `${name}.png`),
  });

const percentile = (xs: number[], p: number) => [...xs].sort((a, b) => a - b)[Math.min(xs.length - 1, Math.floor((p / 100) * xs.length))];

describe('timeline at scale', () => {
  it(`scrolls a timeline of ${FRAMES.toLocaleString('en-GB')} frames far from the start and jumps to its end`, { timeout: 600_000 }, async () => {
    const shot = stepShots('timeline-scale');
    dir = mkdtempSync(join(tmpdir(), 'flagline-scale-'));
    const file = writeLargeFrameLog(dir, FRAMES);
    const { context, page } = await newPage(browser);
    page.setDefaultTimeout(60_000);
    try {
      await signInAsDemo(page, baseUrl, 'analyst@demo.test');
      await page.goto(`${baseUrl}/`);
      await page.getByRole('link').filter({ hasText: 'Wrenfield Parish Office, 1983' }).first().click();
      await page.getByRole('heading', { level: 1, name: 'Wrenfield Parish Office, 1983' }).waitFor();
      const rigId = Number(new URL(page.url()).pathname.split('/')[2]);
      await page.goto(`${baseUrl}/rigs/${rigId}/captures/new`);
      await page.getByLabel('Capture file').setInputFiles(file);
      await page.getByTestId('detected-format').filter({ hasText: 'hex frame log' }).waitFor();
      const decodeStart = Date.now();
      await page.getByRole('button', { name: 'Save roles and decode' }).click();
      await page.getByText('Frames over time').waitFor({ timeout: 480_000 });
      const decodeSeconds = (Date.now() - decodeStart) / 1000;
      const timelineUrl = page.url().replace(/\/?$/, '/timeline');

      const loadStart = Date.now();
      await page.goto(timelineUrl);
      const scroller = page.getByTestId('timeline-scroller');
      await scroller.locator('[data-frame-id]').first().waitFor();
      const firstPageMs = Date.now() - loadStart;
      await page.getByTestId('match-count').filter({ hasText: `${FRAMES.toLocaleString('en-GB')} rows match` }).waitFor();
      await shot(page, 'first-page');

      // the same measure with the list standing still, as the baseline of this machine and browser
      const idle = await scroller.evaluate(async () => {
        const deltas: number[] = [];
        let last = performance.now();
        const end = last + 1500;
        await new Promise<void>((done) => {
          const step = (now: number) => {
            deltas.push(now - last);
            last = now;
            if (now < end) requestAnimationFrame(step);
            else done();
          };
          requestAnimationFrame(step);
        });
        return deltas.slice(1);
      });
      const firstId = Number(await scroller.locator('[data-frame-id]').first().getAttribute('data-frame-id'));

      /**
       * Scrolls by `step` px each animation frame, recording the time between frames, until
       * `rows` rows have gone past the top or `ms` have passed.
       */
      const scroll = (step: number, ms: number, rows: number) =>
        scroller.evaluate(
          async (el: HTMLElement, a: { step: number; ms: number; rows: number; firstId: number }) => {
            const deltas: number[] = [];
            const topId = () => Math.min(...[...el.querySelectorAll('[data-frame-id]')].map((r) => Number(r.getAttribute('data-frame-id'))));
            const end = performance.now() + a.ms;
            let last = performance.now();
            await new Promise<void>((done) => {
              const frame = (now: number) => {
                deltas.push(now - last);
                last = now;
                el.scrollTop += a.step;
                if (now < end && topId() - a.firstId < a.rows) requestAnimationFrame(frame);
                else done();
              };
              requestAnimationFrame(frame);
            });
            return { deltas: deltas.slice(1), topId: topId(), rowsInDom: el.querySelectorAll('[role="row"]').length };
          },
          { step, ms, rows, firstId },
        );
      // a steady wheel-like scroll (4 rows a frame), then a fling far down the capture (30 rows a frame)
      const steady = await scroll(120, 6_000, Infinity);
      const fling = await scroll(900, 90_000, 8_000);
      await viewShot(page, '02-after-scrolling');
      const reachedRow = fling.topId - firstId;
      const summary = (d: number[]) =>
        `${d.length} frames: median ${percentile(d, 50).toFixed(1)} ms, p95 ${percentile(d, 95).toFixed(1)} ms, max ${Math.max(...d).toFixed(1)} ms`;
      console.log(
        `[timeline-scale] ${FRAMES} frames · decode ${decodeSeconds.toFixed(1)} s · first page ${firstPageMs} ms · ` +
          `standing still ${summary(idle)} · steady scroll ${summary(steady.deltas)} · fling ${summary(fling.deltas)} · ` +
          `reached row ${reachedRow.toLocaleString('en-GB')} · ${fling.rowsInDom} rows in the DOM`,
      );
      // far from the first page: the list kept loading pages (and dropping old ones) while it scrolled
      expect(reachedRow).toBeGreaterThanOrEqual(8_000);
      expect(fling.rowsInDom).toBeLessThan(200);

      // the end of the capture through the time jump, then the URL reproduces the view
      await page.getByLabel('Go to time (s)').fill(String((FRAMES - 10) * FRAME_SPACING));
      const jumpStart = Date.now();
      await page.getByRole('button', { name: 'Go', exact: true }).click();
      await page.getByTestId('loaded-range').filter({ hasText: /showing 99\.99/ }).waitFor();
      console.log(`[timeline-scale] jump to the last rows ${Date.now() - jumpStart} ms`);
      // the earlier rows that load above it leave the last rows in view
      await page.waitForTimeout(1500);
      await expect.poll(() => page.getByTestId('loaded-range').innerText(), { timeout: 15_000 }).toMatch(/showing 99\.99\d+ s – 99\.9995/);
      await viewShot(page, '03-end-of-capture');
      const shared = page.url();
      expect(new URL(shared).searchParams.get('at')).toMatch(/^99\.99/);
      const other = await context.newPage();
      await other.goto(shared);
      await other.getByTestId('loaded-range').filter({ hasText: /showing 99\.99/ }).waitFor();
      await other.close();
    } finally {
      await context.close();
    }
  });
});
