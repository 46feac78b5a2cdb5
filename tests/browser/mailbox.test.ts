import { afterAll, beforeAll, describe, expect, inject, it } from 'vitest';
import type { Browser, BrowserContext } from 'playwright-core';
import { launchBrowser, newPage, stepShots, unique } from './support/browser';
import { DEMO_OWNER, createRig, readMailLink, signInAsDemo } from './support/flows';

const baseUrl = inject('baseUrl');
const DEMO_VIEWER = 'viewer@demo.test';
let browser: Browser;

beforeAll(async () => {
  browser = await launchBrowser();
});
afterAll(async () => {
  await browser?.close();
});

describe('development mailbox in the browser', () => {
  it("shows a viewer who creates a rig only their own mail, never another account's reset link", async () => {
    const shot = stepShots('mailbox-own-mail-only');
    const contexts: BrowserContext[] = [];
    try {
      // someone asks for a reset link for the demo owner's account
      const stranger = await newPage(browser);
      contexts.push(stranger.context);
      await stranger.page.goto(`${baseUrl}/reset-password`);
      await stranger.page.getByLabel('E-mail').fill(DEMO_OWNER);
      await stranger.page.getByRole('button', { name: 'Send reset link' }).click();
      await stranger.page.getByText(`If an account exists for ${DEMO_OWNER}`).waitFor();

      // a viewer makes a rig of their own (and so owns one) and opens the mailbox
      const viewer = await newPage(browser);
      contexts.push(viewer.context);
      await signInAsDemo(viewer.page, baseUrl, DEMO_VIEWER);
      await createRig(viewer.page, baseUrl, unique('Viewer-owned rig'));
      await viewer.page.getByRole('link', { name: 'Dev mailbox' }).click();
      await viewer.page.getByRole('heading', { name: 'Development mailbox' }).waitFor();
      await expect.poll(() => viewer.page.locator('main').innerText(), { timeout: 15_000 }).toContain(`addressed to you, ${DEMO_VIEWER}`);
      await viewer.page.getByRole('button', { name: 'Refresh' }).click();
      const text = await viewer.page.locator('main').innerText();
      expect(text).not.toContain(DEMO_OWNER);
      expect(await viewer.page.getByRole('link', { name: /\/reset-password\// }).count()).toBe(0);
      expect(await viewer.page.getByRole('article').filter({ hasText: 'Reset your Flagline password' }).count()).toBe(0);
      await shot(viewer.page, 'viewer-mailbox');

      // the owner, signed in, finds the link in their own mailbox
      const owner = await newPage(browser);
      contexts.push(owner.context);
      await signInAsDemo(owner.page, baseUrl, DEMO_OWNER);
      const href = await readMailLink(owner.page, 'Reset your Flagline password', DEMO_OWNER, /\/reset-password\//);
      expect(new URL(href).pathname).toMatch(/^\/reset-password\/[A-Za-z0-9_-]{20,}$/);
      await shot(owner.page, 'owner-mailbox');
    } finally {
      for (const context of contexts) await context.close();
    }
  });
});
