import fs from 'node:fs';
import os from 'node:os';
import path from 'node:path';
import request from 'supertest';
import type TestAgent from 'supertest/lib/agent';
import { createApp, type AppOptions, type FlaglineApp } from '../../server/index';
import { openDb } from '../../server/db/client';
import { users, memberships } from '../../server/db/schema';
import { createPasswordHasher } from '../../server/auth/passwords';

export const TEST_BCRYPT_COST = 4;
export const PASSWORD = 'correct horse battery';

/** the rate limits out of the way; tests of a limit set their own */
export const GENEROUS_LIMITS = {
  signIn: 1000,
  signInPerAddress: 10_000,
  signInBackoffMaxMs: 0,
  reset: 1000,
  resetPerRecipient: 1000,
  invitationsPerUser: 1000,
  invitationsPerRecipient: 1000,
};

/** An app on a fresh in-memory database, fast hashing, limits out of the way, development mailbox. */
export async function testApp(opts: AppOptions = {}): Promise<FlaglineApp> {
  const handle = openDb(':memory:');
  const app = await createApp({
    db: handle,
    bcryptCost: TEST_BCRYPT_COST,
    rateLimit: GENEROUS_LIMITS,
    publicUrl: 'http://flagline.test',
    smtpUrl: '',
    mailbox: true,
    ...opts,
  });
  return {
    ...app,
    close() {
      app.close();
      handle.close();
    },
  };
}

export function tempDbPath(): { path: string; cleanup(): void } {
  const dir = fs.mkdtempSync(path.join(os.tmpdir(), 'flagline-api-'));
  return { path: path.join(dir, 'test.db'), cleanup: () => fs.rmSync(dir, { recursive: true, force: true }) };
}

const hasher = createPasswordHasher(TEST_BCRYPT_COST);

/** Inserts an account directly (no HTTP), for arranging a test. */
export async function makeUser(app: FlaglineApp, email: string, name = email.split('@')[0]): Promise<number> {
  const passwordHash = await hasher.hash(PASSWORD);
  return app.db.db.insert(users).values({ email, name, passwordHash }).returning().get().id;
}

export function addMember(app: FlaglineApp, rigId: number, userId: number, role: 'owner' | 'analyst' | 'viewer') {
  app.db.db.insert(memberships).values({ rigId, userId, role }).run();
}

/** A cookie-keeping client that sends the CSRF token on state-changing requests. */
export class Client {
  readonly agent: TestAgent;
  csrf = '';

  constructor(readonly app: FlaglineApp['app']) {
    this.agent = request.agent(app);
  }

  async refreshToken(): Promise<void> {
    const res = await this.agent.get('/api/session').expect(200);
    this.csrf = res.body.csrfToken;
  }

  get(url: string) {
    return this.agent.get(url);
  }
  post(url: string, body?: object) {
    return this.agent.post(url).set('x-csrf-token', this.csrf).send(body);
  }
  patch(url: string, body?: object) {
    return this.agent.patch(url).set('x-csrf-token', this.csrf).send(body);
  }
  delete(url: string) {
    return this.agent.delete(url).set('x-csrf-token', this.csrf);
  }
  /** any method, for tables of routes */
  send(method: string, url: string, body?: object) {
    const m = method.toLowerCase() as 'get' | 'post' | 'patch' | 'put' | 'delete';
    const req = this.agent[m](url);
    if (m !== 'get') req.set('x-csrf-token', this.csrf);
    return body ? req.send(body) : req;
  }

  async signIn(email: string, password = PASSWORD): Promise<void> {
    if (!this.csrf) await this.refreshToken();
    const res = await this.post('/api/session', { email, password });
    if (res.status !== 200) throw new Error(`sign-in of ${email} failed: ${res.status} ${JSON.stringify(res.body)}`);
    this.csrf = res.body.csrfToken;
  }
}

export async function anonymous(app: FlaglineApp): Promise<Client> {
  const c = new Client(app.app);
  await c.refreshToken();
  return c;
}

export async function signedIn(app: FlaglineApp, email: string, password = PASSWORD): Promise<Client> {
  const c = new Client(app.app);
  await c.signIn(email, password);
  return c;
}

export const rigBody = (name = 'Bench rig') => ({
  name,
  description: 'Two stations on the bench',
  lineSettings: { bitRate: 800000, encoding: 'nrzi', clockEdge: 'rising', bitOrder: 'lsb-first' },
});

/** The link the fake mailbox holds for the newest mail to `to`. */
export function linkFromMail(app: FlaglineApp, to: string, kind: 'invitations' | 'reset-password'): string {
  const row = app.db.sqlite
    .prepare('select text from mail_messages where "to" = ? order by id desc limit 1')
    .get(to) as { text: string } | undefined;
  if (!row) throw new Error(`no mail to ${to}`);
  const m = row.text.match(new RegExp(`http://flagline\\.test/${kind}/([A-Za-z0-9_-]+)`));
  if (!m) throw new Error(`no ${kind} link in mail to ${to}`);
  return m[1];
}
