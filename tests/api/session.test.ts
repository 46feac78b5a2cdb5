import { afterEach, describe, expect, it } from 'vitest';
import { createApp, type FlaglineApp } from '../../server/index';
import { DEFAULT_RATE_LIMITS } from '../../server/http/rate-limits';
import { Client, GENEROUS_LIMITS, PASSWORD, TEST_BCRYPT_COST, anonymous, makeUser, signedIn, tempDbPath, testApp } from './helpers';

let apps: FlaglineApp[] = [];
afterEach(() => {
  apps.forEach((a) => a.close());
  apps = [];
});
const track = (a: FlaglineApp) => (apps.push(a), a);

describe('sign-in and sessions', () => {
  it('answers an anonymous session with no user and a CSRF token', async () => {
    const app = track(await testApp());
    const res = await new Client(app.app).get('/api/session').expect(200);
    expect(res.body).toMatchObject({ user: null, demo: null, devMailbox: true });
    expect(res.body.csrfToken).toMatch(/^[0-9a-f]{64}$/);
  });

  it('signs in with the right password, sets an httpOnly sameSite cookie and a new CSRF token', async () => {
    const app = track(await testApp());
    await makeUser(app, 'ada@example.test', 'Ada');
    const c = await anonymous(app);
    const before = c.csrf;
    const res = await c.post('/api/session', { email: ' ADA@example.test ', password: PASSWORD }).expect(200);
    expect(res.body.user).toMatchObject({ email: 'ada@example.test', name: 'Ada' });
    expect(res.body.csrfToken).not.toBe(before);
    const cookie = String(res.headers['set-cookie']);
    expect(cookie).toMatch(/flagline\.sid=/);
    expect(cookie).toMatch(/HttpOnly/);
    expect(cookie).toMatch(/SameSite=Lax/);
    expect(cookie).not.toMatch(/Secure/);
    c.csrf = res.body.csrfToken;
    const me = await c.get('/api/session').expect(200);
    expect(me.body.user.email).toBe('ada@example.test');
  });

  it('marks the cookie Secure when the request came over https through a trusted proxy', async () => {
    const app = track(await testApp());
    await makeUser(app, 'ada@example.test');
    const c = await anonymous(app);
    const res = await c.agent
      .post('/api/session')
      .set('x-csrf-token', c.csrf)
      .set('x-forwarded-proto', 'https')
      .send({ email: 'ada@example.test', password: PASSWORD })
      .expect(200);
    expect(String(res.headers['set-cookie'])).toMatch(/Secure/);
  });

  it('gives a new session id at sign-in (no session fixation)', async () => {
    const app = track(await testApp());
    await makeUser(app, 'ada@example.test');
    const c = await signedIn(app, 'ada@example.test');
    const sidBefore = app.db.sqlite.prepare('select sid from sessions').all() as { sid: string }[];
    expect(sidBefore).toHaveLength(1);
    // signing in again from a signed-in session (another account, or the same) moves to a new id
    c.csrf = (await c.post('/api/session', { email: 'ada@example.test', password: PASSWORD }).expect(200)).body.csrfToken;
    const sidAfter = app.db.sqlite.prepare('select sid from sessions').all() as { sid: string }[];
    expect(sidAfter).toHaveLength(1);
    expect(sidAfter[0].sid).not.toBe(sidBefore[0].sid);
  });

  it('stores no session for anonymous visits, yet checks their CSRF token', async () => {
    const app = track(await testApp());
    await makeUser(app, 'ada@example.test');
    const rows = () => (app.db.sqlite.prepare('select count(*) as n from sessions').get() as { n: number }).n;
    const c = await anonymous(app);
    for (let i = 0; i < 3; i++) await c.get('/api/session').expect(200);
    await new Client(app.app).get('/api/session').expect(200);
    expect(rows()).toBe(0);
    // the visitor's token is bound to its own cookie: another visitor's cookie does not carry it
    const other = await anonymous(app);
    await other.agent.post('/api/session').set('x-csrf-token', c.csrf).send({ email: 'ada@example.test', password: PASSWORD }).expect(403);
    await c.post('/api/session', { email: 'ada@example.test', password: 'a wrong password' }).expect(401);
    expect(rows()).toBe(0);
    await c.signIn('ada@example.test');
    expect(rows()).toBe(1);
    await c.delete('/api/session').expect(200);
    expect(rows()).toBe(0);
  });

  it('refuses a wrong password and an unknown address with the same 401', async () => {
    const app = track(await testApp());
    await makeUser(app, 'ada@example.test');
    const c = await anonymous(app);
    const wrong = await c.post('/api/session', { email: 'ada@example.test', password: 'not the password' }).expect(401);
    const unknown = await c.post('/api/session', { email: 'nobody@example.test', password: PASSWORD }).expect(401);
    expect(wrong.body).toEqual({ error: 'Wrong e-mail address or password' });
    expect(unknown.body).toEqual(wrong.body);
  });

  it('refuses a state-changing request without the CSRF header with a clear 403', async () => {
    const app = track(await testApp());
    await makeUser(app, 'ada@example.test');
    const c = await anonymous(app);
    const res = await c.agent.post('/api/session').send({ email: 'ada@example.test', password: PASSWORD }).expect(403);
    expect(res.body.error).toMatch(/security token \(x-csrf-token\)/);
    await c.agent.post('/api/session').set('x-csrf-token', 'forged').send({ email: 'ada@example.test', password: PASSWORD }).expect(403);
  });

  it('answers a malformed sign-in body with per-field messages', async () => {
    const app = track(await testApp());
    const c = await anonymous(app);
    const res = await c.post('/api/session', { email: 'not-an-address', password: '' }).expect(400);
    expect(res.body.fields).toEqual({ email: 'Enter a valid e-mail address', password: 'Enter your password' });
    const notJson = await c.agent
      .post('/api/session')
      .set('x-csrf-token', c.csrf)
      .set('content-type', 'application/json')
      .send('{"email":')
      .expect(400);
    expect(notJson.body).toEqual({ error: 'The request body is not valid JSON' });
  });

  it('signs out, returns a new token and forgets the user', async () => {
    const app = track(await testApp());
    await makeUser(app, 'ada@example.test');
    const c = await signedIn(app, 'ada@example.test');
    const res = await c.delete('/api/session').expect(200);
    expect(res.body.csrfToken).toMatch(/^[0-9a-f]{64}$/);
    expect(res.body.csrfToken).not.toBe(c.csrf);
    c.csrf = res.body.csrfToken;
    expect((await c.get('/api/session')).body.user).toBeNull();
    await c.get('/api/rigs').expect(401);
    await c.delete('/api/session').expect(401);
  });

  it('keeps a sign-in across a restart on the same database file', async () => {
    const db = tempDbPath();
    try {
      const first = await createApp({ dbPath: db.path, bcryptCost: TEST_BCRYPT_COST, smtpUrl: '' });
      await makeUser(first, 'ada@example.test');
      const c = await signedIn(first, 'ada@example.test');
      const cookie = (await c.get('/api/session')).request.cookies;
      first.close();

      const second = track(await createApp({ dbPath: db.path, bcryptCost: TEST_BCRYPT_COST, smtpUrl: '' }));
      const again = new Client(second.app);
      const res = await again.agent.get('/api/session').set('cookie', cookie).expect(200);
      expect(res.body.user?.email).toBe('ada@example.test');
    } finally {
      apps.forEach((a) => a.close());
      apps = [];
      db.cleanup();
    }
  });

  it('rate limits failed sign-ins per address with 429', async () => {
    const app = track(await testApp({ rateLimit: { signIn: 2 } }));
    await makeUser(app, 'ada@example.test');
    const c = await anonymous(app);
    await c.post('/api/session', { email: 'ada@example.test', password: 'wrong-one-1' }).expect(401);
    await c.post('/api/session', { email: 'ada@example.test', password: 'wrong-one-2' }).expect(401);
    const res = await c.post('/api/session', { email: 'ada@example.test', password: PASSWORD }).expect(429);
    expect(res.body.error).toMatch(/Too many failed sign-in attempts/);
  });

  it('answers unknown API paths with a JSON 404', async () => {
    const app = track(await testApp());
    const res = await new Client(app.app).get('/api/no-such-thing').expect(404);
    expect(res.body).toEqual({ error: 'No API route GET /api/no-such-thing' });
  });

  it('sends a content security policy without inline scripts', async () => {
    const app = track(await testApp());
    const res = await new Client(app.app).get('/api/session');
    const csp = res.headers['content-security-policy'];
    expect(csp).toContain("default-src 'self'");
    expect(csp).toMatch(/script-src 'self';/);
  });
});

describe('sign-in rate limit', () => {
  /** a client at its own address (behind a trusted proxy that says so) */
  async function from(app: FlaglineApp, address: string): Promise<Client> {
    const c = new Client(app.app);
    const res = await c.agent.get('/api/session').set('x-forwarded-for', address).expect(200);
    c.csrf = res.body.csrfToken;
    return c;
  }
  const attempt = (c: Client, address: string, email: string, password: string) =>
    c.agent.post('/api/session').set('x-csrf-token', c.csrf).set('x-forwarded-for', address).send({ email, password });

  it('lets 20 simultaneous correct sign-ins all through under the default limits', async () => {
    const app = track(await testApp({ rateLimit: DEFAULT_RATE_LIMITS }));
    await makeUser(app, 'ada@example.test');
    const clients = await Promise.all(Array.from({ length: 20 }, () => anonymous(app)));
    const answers = await Promise.all(clients.map((c) => c.post('/api/session', { email: 'ada@example.test', password: PASSWORD })));
    expect(answers.map((r) => r.status)).toEqual(Array(20).fill(200));
  });

  it('locks out each guessing address but still takes the correct password from another one', async () => {
    const app = track(await testApp({ trustProxy: true, rateLimit: { ...GENEROUS_LIMITS, signIn: 3, signInBackoffMaxMs: 20 } }));
    await makeUser(app, 'ada@example.test');
    for (let i = 1; i <= 10; i++) {
      const address = `198.51.100.${i}`;
      const c = await from(app, address);
      for (let k = 0; k < 3; k++) await attempt(c, address, 'ada@example.test', `guess ${i}-${k}`).expect(401);
      const locked = await attempt(c, address, 'ada@example.test', `guess ${i}-again`).expect(429);
      expect(locked.body.error).toMatch(/^Too many failed sign-in attempts; wait \d+ minutes? and try again$/);
      expect(Number(locked.headers['retry-after'])).toBeGreaterThan(0);
    }
    // 30 wrong passwords for the account from ten addresses: the owner, elsewhere, is only slowed
    const owner = await from(app, '203.0.113.7');
    await attempt(owner, '203.0.113.7', 'ada@example.test', PASSWORD).expect(200);
    // and an eleventh address still gets an honest answer to a wrong password
    const eleventh = await from(app, '198.51.100.11');
    await attempt(eleventh, '198.51.100.11', 'ada@example.test', 'another guess').expect(401);
  });

  it('does not count refusals, and forgets the failures when the window ends', async () => {
    let now = 1_000_000;
    const app = track(
      await testApp({ trustProxy: true, rateLimit: { ...GENEROUS_LIMITS, signIn: 2, signInPerAddress: 4, now: () => now } }),
    );
    await makeUser(app, 'ada@example.test');
    await makeUser(app, 'bob@example.test');
    const c = await from(app, '198.51.100.1');
    await attempt(c, '198.51.100.1', 'ada@example.test', 'wrong one').expect(401);
    await attempt(c, '198.51.100.1', 'ada@example.test', 'wrong two').expect(401);
    for (let k = 0; k < 5; k++) await attempt(c, '198.51.100.1', 'ada@example.test', `hammering ${k}`).expect(429);
    // had the five refusals counted, this address would be over its limit of 4 for every account
    await attempt(c, '198.51.100.1', 'bob@example.test', PASSWORD).expect(200);
    now += 15 * 60 * 1000;
    const again = await from(app, '198.51.100.1');
    await attempt(again, '198.51.100.1', 'ada@example.test', PASSWORD).expect(200);
  });
});
