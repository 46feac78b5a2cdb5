import { afterEach, describe, expect, it } from 'vitest';
import { createApp, type FlaglineApp } from '../../server/index';
import { Client, PASSWORD, TEST_BCRYPT_COST, anonymous, makeUser, signedIn, tempDbPath, testApp } from './helpers';

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
    const c = await anonymous(app);
    const sidBefore = app.db.sqlite.prepare('select sid from sessions').all() as { sid: string }[];
    expect(sidBefore).toHaveLength(1);
    await c.signIn('ada@example.test');
    const sidAfter = app.db.sqlite.prepare('select sid from sessions').all() as { sid: string }[];
    expect(sidAfter).toHaveLength(1);
    expect(sidAfter[0].sid).not.toBe(sidBefore[0].sid);
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
