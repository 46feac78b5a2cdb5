import { afterAll, beforeAll, describe, expect, inject, it } from 'vitest';
import type { Browser, Page } from 'playwright-core';
import { launchBrowser, newPage, stepShots, unique } from './support/browser';
import { allowConsole } from './support/console';
import { DEMO_OWNER, addStation, createRig, inviteAndReadLink, openInNewContext, signInAsDemo } from './support/flows';

const baseUrl = inject('baseUrl');
let browser: Browser;

beforeAll(async () => {
  browser = await launchBrowser();
});
afterAll(async () => {
  await browser?.close();
});

function uniqueEmail(prefix: string): string {
  return `${unique(prefix).replace(/\s+/g, '-').toLowerCase()}@example.test`;
}

/** What the API answers when this browser asks it directly, with its own cookies and CSRF token. */
async function patchRigDirectly(page: Page, rigId: number, name: string): Promise<{ status: number; error?: string }> {
  return page.evaluate(
    async ({ rigId, name }) => {
      const session = await (await fetch('/api/session')).json();
      const response = await fetch(`/api/rigs/${rigId}`, {
        method: 'PATCH',
        headers: { 'content-type': 'application/json', 'x-csrf-token': session.csrfToken },
        body: JSON.stringify({ name }),
      });
      const body = await response.json().catch(() => ({}));
      return { status: response.status, error: body.error };
    },
    { rigId, name },
  );
}

async function acceptAsNewAccount(page: Page, name: string): Promise<void> {
  await page.getByLabel('Your name').fill(name);
  await page.getByLabel('Choose a password').fill('correct horse battery');
  await page.getByRole('button', { name: 'Create account and join' }).click();
}

describe('invitations in the browser', () => {
  it('lets an invited viewer join from the mailed link, hides every edit control, and the server refuses a direct change', async () => {
    const shot = stepShots('invite-viewer');
    const owner = await newPage(browser);
    let viewer: Awaited<ReturnType<typeof openInNewContext>> | undefined;
    try {
      await signInAsDemo(owner.page, baseUrl, DEMO_OWNER);
      const rigName = unique('Shared rig');
      const rigId = await createRig(owner.page, baseUrl, rigName);
      await addStation(owner.page, '0x10', 'Hall server', 'Server');
      const email = uniqueEmail('new-viewer');
      const href = await inviteAndReadLink(owner.page, baseUrl, rigId, email, 'viewer');
      await shot(owner.page, 'invitation-sent');
      expect(new URL(href).origin).toBe(new URL(baseUrl).origin);

      viewer = await openInNewContext(browser, href);
      const page = viewer.page;
      await page.getByRole('heading', { name: `Join “${rigName}”` }).waitFor();
      await expect.poll(() => page.locator('main').innerText(), { timeout: 15_000 }).toContain(email);
      await shot(page, 'invitation');
      await acceptAsNewAccount(page, 'Vera Viewer');

      await page.getByRole('heading', { level: 1, name: rigName, exact: true }).waitFor();
      expect(new URL(page.url()).pathname).toBe(`/rigs/${rigId}`);
      await page.getByText('Signed in as').filter({ hasText: 'Vera Viewer' }).waitFor();
      await page.getByText('You are a viewer on this rig').waitFor();
      await page.getByRole('cell', { name: 'Hall server' }).waitFor();
      await shot(page, 'viewer-stations');
      expect(await page.getByRole('button', { name: 'Add station' }).count()).toBe(0);
      expect(await page.getByRole('button', { name: /^(Edit|Delete) / }).count()).toBe(0);

      await page.getByRole('link', { name: 'Line settings' }).click();
      await page.getByText("Only the rig's owner can change these.").waitFor();
      expect(await page.getByRole('textbox').count()).toBe(0);
      expect(await page.getByRole('button', { name: /Save|Delete rig/ }).count()).toBe(0);
      await shot(page, 'viewer-settings');

      await page.getByRole('link', { name: 'Members' }).click();
      await page.getByRole('cell', { name: /Vera Viewer/ }).waitFor();
      const myRow = page.getByRole('row').filter({ hasText: 'Vera Viewer' });
      await expect.poll(() => myRow.innerText(), { timeout: 15_000 }).toContain('viewer');
      expect(await page.getByRole('combobox').count()).toBe(0);
      expect(await page.getByRole('button', { name: 'Send invitation' }).count()).toBe(0);
      // demo mode: everyone signed in has a mailbox of their own (mailbox.test.ts checks it shows only their mail)
      await page.getByRole('link', { name: 'Dev mailbox' }).waitFor();
      await shot(page, 'viewer-members');

      allowConsole(page, /status of 403 \(Forbidden\) \(\/api\/rigs\/\d+:/);
      const answer = await patchRigDirectly(page, rigId, 'Taken over');
      expect(answer.status).toBe(403);
      await page.reload();
      await page.getByRole('heading', { level: 1, name: rigName, exact: true }).waitFor();

      // the owner sees the new member with the invited role
      await owner.page.goto(`${baseUrl}/rigs/${rigId}/members`);
      await owner.page.getByRole('combobox', { name: 'Role of Vera Viewer' }).waitFor();
      expect(await owner.page.getByRole('combobox', { name: 'Role of Vera Viewer' }).inputValue()).toBe('viewer');
      await shot(owner.page, 'owner-members');
    } finally {
      await viewer?.context.close();
      await owner.context.close();
    }
  });

  it('tells a visitor who opens a used invitation link that it was already used', async () => {
    const shot = stepShots('reused-invitation');
    const owner = await newPage(browser);
    const contexts = [owner.context];
    try {
      await signInAsDemo(owner.page, baseUrl, DEMO_OWNER);
      const rigName = unique('Once-only rig');
      const rigId = await createRig(owner.page, baseUrl, rigName);
      const href = await inviteAndReadLink(owner.page, baseUrl, rigId, uniqueEmail('analyst'), 'analyst');

      const first = await openInNewContext(browser, href);
      contexts.push(first.context);
      await acceptAsNewAccount(first.page, 'Ada Analyst');
      await first.page.getByRole('heading', { level: 1, name: rigName, exact: true }).waitFor();

      const second = await openInNewContext(browser, href);
      contexts.push(second.context);
      allowConsole(second.page, /status of 410 \(Gone\) \(\/api\/invitations\//);
      await second.page.getByRole('heading', { name: 'This invitation can no longer be used' }).waitFor();
      await second.page.getByText(/already been used/).waitFor();
      expect(await second.page.getByRole('button', { name: /join/i }).count()).toBe(0);
      // what to do next is said once, not twice
      expect((await second.page.locator('main').innerText()).match(/ask the rig owner/gi)).toHaveLength(1);
      await shot(second.page, 'already-used');
    } finally {
      for (const context of contexts) await context.close();
    }
  });

  it('lets the owner revoke a pending invitation, after which its link is no longer valid', async () => {
    const shot = stepShots('revoke-invitation');
    const owner = await newPage(browser);
    const contexts = [owner.context];
    try {
      await signInAsDemo(owner.page, baseUrl, DEMO_OWNER);
      const rigName = unique('Revoked rig');
      const rigId = await createRig(owner.page, baseUrl, rigName);
      const email = uniqueEmail('changed-mind');
      const href = await inviteAndReadLink(owner.page, baseUrl, rigId, email, 'viewer');

      await owner.page.goto(`${baseUrl}/rigs/${rigId}/members`);
      await owner.page.getByRole('button', { name: `Revoke the invitation for ${email}` }).click();
      await owner.page.getByText('No invitations are waiting for an answer.').waitFor();
      await shot(owner.page, 'revoked');

      const visitor = await openInNewContext(browser, href);
      contexts.push(visitor.context);
      allowConsole(visitor.page, /status of 404 \(Not Found\) \(\/api\/invitations\//);
      await visitor.page.getByRole('heading', { name: 'Unknown invitation' }).waitFor();
      expect(await visitor.page.getByLabel('Choose a password').count()).toBe(0);
    } finally {
      for (const context of contexts) await context.close();
    }
  });
});
