import { afterAll, beforeAll, describe, expect, inject, it } from 'vitest';
import type { Browser, BrowserContext } from 'playwright-core';
import { launchBrowser, newPage, stepShots, unique } from './support/browser';
import { allowConsole } from './support/console';
import { DEMO_OWNER, createRig, inviteAndReadLink, openInNewContext, readInboxLink, signIn, signInAsDemo } from './support/flows';

const baseUrl = inject('baseUrl');
let browser: Browser;

beforeAll(async () => {
  browser = await launchBrowser();
});
afterAll(async () => {
  await browser?.close();
});

describe('password reset in the browser', () => {
  it('mails a reset link that sets a new password once, signs the user in, and retires the old password', async () => {
    const shot = stepShots('password-reset');
    const contexts: BrowserContext[] = [];
    try {
      // an account of its own, so the demo accounts other tests use keep their password
      const owner = await newPage(browser);
      contexts.push(owner.context);
      await signInAsDemo(owner.page, baseUrl, DEMO_OWNER);
      const rigName = unique('Reset rig');
      const rigId = await createRig(owner.page, baseUrl, rigName);
      const email = `${unique('forgetful').replace(/\s+/g, '-').toLowerCase()}@example.test`;
      const invitation = await inviteAndReadLink(owner.page, baseUrl, rigId, email, 'analyst');

      const person = await openInNewContext(browser, invitation);
      contexts.push(person.context);
      const page = person.page;
      await page.getByLabel('Your name').fill('Rita Reset');
      await page.getByLabel('Choose a password').fill('first password 1');
      await page.getByRole('button', { name: 'Create account and join' }).click();
      await page.getByRole('heading', { level: 1, name: rigName, exact: true }).waitFor();
      await page.getByRole('button', { name: 'Sign out' }).click();
      await page.getByRole('heading', { name: 'Sign in' }).waitFor();

      await page.getByRole('link', { name: 'Forgot your password?' }).click();
      await page.getByLabel('E-mail').fill(email);
      await page.getByRole('button', { name: 'Send reset link' }).click();
      await page.getByText(`If an account exists for ${email}`).waitFor();
      await shot(page, 'reset-requested');

      // Rita cannot sign in to read it: the link comes from her own inbox
      const resetLink = readInboxLink(email, /\/reset-password\//);
      expect(new URL(resetLink).origin).toBe(new URL(baseUrl).origin);
      await page.goto(resetLink);
      await page.getByRole('heading', { name: 'Set a new password' }).waitFor();
      await page.getByText(email).waitFor();
      await page.getByLabel('New password').fill('short');
      await page.getByRole('button', { name: 'Set password and sign in' }).click();
      await page.getByText('Use at least 10 characters').waitFor();
      await shot(page, 'password-too-short');
      await page.getByLabel('New password').fill('second password 2');
      await page.getByRole('button', { name: 'Set password and sign in' }).click();
      await page.getByRole('heading', { name: 'Your rigs' }).waitFor();
      await page.getByText('Signed in as').filter({ hasText: 'Rita Reset' }).waitFor();
      await page.getByRole('link').filter({ hasText: rigName }).waitFor();

      await page.getByRole('button', { name: 'Sign out' }).click();
      allowConsole(page, /status of 401 \(Unauthorized\) \(\/api\/session:/);
      await signIn(page, email, 'first password 1');
      await page.getByRole('alert').filter({ hasText: 'do not match an account' }).waitFor();
      await signIn(page, email, 'second password 2');
      await page.getByRole('button', { name: 'Sign out' }).waitFor();

      allowConsole(page, /status of 410 \(Gone\) \(\/api\/password-resets\//);
      await page.goto(resetLink);
      await page.getByRole('heading', { name: 'This reset link can no longer be used' }).waitFor();
      await page.getByText(/already been used/).waitFor();
      expect(await page.getByLabel('New password').count()).toBe(0);
      await shot(page, 'reset-link-used');
    } finally {
      for (const context of contexts) await context.close();
    }
  });
});
