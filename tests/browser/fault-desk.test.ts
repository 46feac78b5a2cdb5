import { afterAll, beforeAll, describe, expect, inject, it } from 'vitest';
import type { Browser, Page } from 'playwright-core';
import type { FaultDeskView } from '../../shared/schemas';
import { launchBrowser, newPage, stepShots } from './support/browser';
import { signInAsDemo } from './support/flows';
import { CLOCKED, DEMO_RIG, waitForDemo } from './support/demo';

const baseUrl = inject('baseUrl');

let browser: Browser;
beforeAll(async () => {
  browser = await launchBrowser();
});
afterAll(async () => {
  await browser?.close();
});

async function waitForClocked(page: Page): Promise<{ rigId: number; captureId: number }> {
  const { rigId, ids } = await waitForDemo(page, [CLOCKED], { callLayer: false });
  return { rigId, captureId: ids[CLOCKED] };
}

describe('fault desk', () => {
  it('shows the bad-FCS group with single-bit diagnoses, opens a damaged frame in the inspector and jumps to its retransmission', async () => {
    const shot = stepShots('fault-desk');
    const { context, page } = await newPage(browser);
    try {
      await signInAsDemo(page, baseUrl, 'viewer@demo.test');
      const { rigId, captureId } = await waitForClocked(page);
      const desk = (await page.evaluate(async (p) => (await fetch(p)).json(), `/api/rigs/${rigId}/captures/${captureId}/faults`)) as FaultDeskView;
      // samples/README.md: the clocked session has four bad-FCS frames, each one flipped bit
      const explained = desk.groups.find((g) => g.cause === 'bad-fcs-explained')!.count;
      expect(explained).toBe(4);

      await page.getByRole('link').filter({ hasText: DEMO_RIG }).first().click();
      await page.getByRole('link', { name: 'Captures', exact: true }).click();
      await page.getByRole('link', { name: CLOCKED, exact: true }).click();
      await page.getByRole('heading', { level: 1, name: CLOCKED }).waitFor();
      await page.getByRole('navigation', { name: 'Capture views' }).getByRole('link', { name: 'Fault desk', exact: true }).click();
      await page.waitForURL(/\/faults$/);
      const groups = page.getByRole('navigation', { name: 'Fault groups' });
      await expect.poll(() => groups.getByTestId('group-count-bad-fcs-explained').innerText(), { timeout: 15_000 }).toBe(String(explained));
      await page.getByTestId('fault-strip').waitFor();
      await shot(page, 'fault-desk-all');

      // the group of bad FCS explained by one bit: every row says which bit
      await groups.getByRole('link', { name: /Bad FCS, one bit explains it/ }).click();
      await page.waitForURL(/cause=bad-fcs-explained/);
      const rows = page.getByTestId('fault-row');
      // the desk also lists other causes (race signatures): wait until the filtered page replaces it
      await expect.poll(() => rows.count(), { timeout: 15_000 }).toBe(explained);
      for (const text of await rows.allInnerTexts()) expect(text).toMatch(/one flipped bit explains it — bit \d+/);
      await shot(page, 'bad-fcs-group');

      // a row with a retransmission: open the damaged frame, see its diagnosis and waveform
      const withRetry = desk.rows.find((r) => r.cause === 'bad-fcs-explained' && r.retransmissionFrameId !== null)!;
      expect(withRetry).toBeDefined();
      const row = page.locator('[data-testid="fault-row"]', { hasText: `${withRetry.link} · ${withRetry.seq}` });
      await row.getByRole('link', { name: `Open frame ${withRetry.seq} on ${withRetry.link} in the inspector` }).click();
      await page.waitForURL(new RegExp(`/frames/${withRetry.frameId}$`));
      await page.getByRole('heading', { name: `Frame ${withRetry.seq} on ${withRetry.link}` }).waitFor();
      await expect.poll(() => page.getByTestId('diagnosis').innerText(), { timeout: 15_000 }).toMatch(new RegExp(`${withRetry.flippedBit}`));
      await page.getByRole('img', { name: /^Waveform of .* around the frame$/ }).waitFor();
      await shot(page, 'inspector-damaged-frame');

      // back to the desk and on to the retransmission, a good frame from the same station
      await page.goBack();
      await page.waitForURL(/cause=bad-fcs-explained/);
      await row.getByRole('link', { name: /^open \(same (N\(S\)|call)\)$/ }).click();
      await page.waitForURL(new RegExp(`/frames/${withRetry.retransmissionFrameId}$`));
      await page.getByRole('heading', { name: new RegExp(`^Frame \\d+ on ${withRetry.link}$`) }).waitFor();
      await expect(page.getByTestId('diagnosis').count()).resolves.toBe(0);
      await shot(page, 'inspector-retransmission');
    } finally {
      await context.close();
    }
  });
});
