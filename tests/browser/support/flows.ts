import Database from 'better-sqlite3';
import type { Browser, Page } from 'playwright-core';
import { inject } from 'vitest';
import { newPage } from './browser';

export const DEMO_OWNER = 'owner@demo.test';

/** Signs in from the sign-in page with a demo account, the way a newcomer does. */
export async function signInAsDemo(page: Page, baseUrl: string, email: string): Promise<void> {
  if (!page.url().includes('/sign-in')) await page.goto(`${baseUrl}/sign-in`);
  await page.getByRole('button', { name: `Use ${email}` }).click();
  await page.getByRole('button', { name: 'Sign in', exact: true }).click();
  await page.getByRole('button', { name: 'Sign out' }).waitFor();
}

/** Creates a rig through the New rig form and waits for its page. */
export async function createRig(page: Page, baseUrl: string, name: string): Promise<number> {
  await page.goto(`${baseUrl}/rigs/new`);
  await page.getByLabel('Rig name').fill(name);
  await page.getByLabel('Bit rate (bit/s)').fill('800000');
  await page.getByLabel('Encoding').selectOption('nrzi');
  await page.getByRole('button', { name: 'Create rig' }).click();
  await page.getByRole('heading', { level: 1, name, exact: true }).waitFor();
  const id = Number(new URL(page.url()).pathname.split('/')[2]);
  if (!Number.isInteger(id)) throw new Error(`expected a rig page, got ${page.url()}`);
  return id;
}

export async function addStation(page: Page, address: string, name: string, kind: 'Server' | 'Station'): Promise<void> {
  const form = page.getByRole('form', { name: 'Add a station' });
  await form.getByLabel('Address').fill(address);
  await form.getByLabel('Name').fill(name);
  await form.getByLabel('Kind').selectOption({ label: kind });
  await form.getByRole('button', { name: 'Add station' }).click();
  await page.getByRole('cell', { name, exact: true }).waitFor();
}

/** Signs in by typing e-mail and password into the sign-in page. */
export async function signIn(page: Page, email: string, password: string): Promise<void> {
  if (!new URL(page.url()).pathname.startsWith('/sign-in')) await page.getByRole('heading', { name: 'Sign in' }).waitFor();
  await page.getByLabel('E-mail').fill(email);
  await page.getByLabel('Password').fill(password);
  await page.getByRole('button', { name: 'Sign in', exact: true }).click();
}

/**
 * Reads the link out of the newest matching message on the dev mailbox page, which shows the
 * signed-in person only the mail addressed to them.
 */
export async function readMailLink(page: Page, subject: string, to: string, link: RegExp): Promise<string> {
  await page.goto(`${new URL(page.url()).origin}/dev/mailbox`);
  const message = page.getByRole('article').filter({ hasText: subject }).filter({ hasText: to }).first();
  const href = await message.getByRole('link', { name: link }).getAttribute('href');
  if (!href) throw new Error(`the message "${subject}" to ${to} has no link`);
  return href;
}

/**
 * The link in the newest mail to someone who cannot open the mailbox page (no account yet, or a
 * forgotten password): read from the test server's database, as if from their own inbox.
 */
export function readInboxLink(to: string, link: RegExp): string {
  const db = new Database(inject('dbPath'), { readonly: true, fileMustExist: true });
  try {
    const row = db.prepare('select text from mail_messages where "to" = ? order by id desc limit 1').get(to) as { text: string } | undefined;
    const href = row?.text.split(/\s+/).find((word) => /^https?:\/\//.test(word) && link.test(word));
    if (!href) throw new Error(`no mail to ${to} with a link like ${link}`);
    return href;
  } finally {
    db.close();
  }
}

/** Sends an invitation from the rig's Members tab and returns the link from the invitee's inbox. */
export async function inviteAndReadLink(page: Page, baseUrl: string, rigId: number, email: string, role: string): Promise<string> {
  await page.goto(`${baseUrl}/rigs/${rigId}/members`);
  const form = page.getByRole('form', { name: 'Invite someone' });
  await form.getByLabel('E-mail address').fill(email);
  await form.getByLabel('Role').selectOption(role);
  await form.getByRole('button', { name: 'Send invitation' }).click();
  await page.getByText(`Invitation sent to ${email}`).waitFor();
  return readInboxLink(email, /\/invitations\//);
}

/** Opens an invitation link in a fresh browser context (another person's browser). */
export async function openInNewContext(browser: Browser, href: string) {
  const { context, page } = await newPage(browser);
  await page.goto(href);
  return { context, page };
}
