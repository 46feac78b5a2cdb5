import net from 'node:net';
import { afterEach, beforeEach, describe, expect, it, vi } from 'vitest';
import type { FlaglineApp } from '../../server/index';
import { PASSWORD, anonymous, linkFromMail, makeUser, signedIn, testApp } from './helpers';

let app: FlaglineApp;
beforeEach(async () => {
  app = await testApp();
  await makeUser(app, 'ada@example.test', 'Ada');
});
afterEach(() => app.close());

const mailCount = () => (app.db.sqlite.prepare('select count(*) as n from mail_messages').get() as { n: number }).n;

describe('password reset', () => {
  it('mails a link, shows its address, sets the new password, signs in and ends older sign-ins', async () => {
    const elsewhere = await signedIn(app, 'ada@example.test');
    const guest = await anonymous(app);
    const res = await guest.post('/api/password-resets', { email: 'ADA@example.test' }).expect(202);
    expect(res.body.message).toMatch(/If an account uses that address/);
    const token = linkFromMail(app, 'ada@example.test', 'reset-password');
    expect((await guest.get(`/api/password-resets/${token}`).expect(200)).body).toEqual({ email: 'ada@example.test' });

    const done = await guest.post(`/api/password-resets/${token}`, { password: 'a brand new password' }).expect(200);
    expect(done.body.user).toMatchObject({ email: 'ada@example.test' });
    guest.csrf = done.body.csrfToken;
    expect((await guest.get('/api/session')).body.user.email).toBe('ada@example.test');
    expect((await elsewhere.get('/api/session')).body.user).toBeNull();

    const fresh = await anonymous(app);
    await fresh.post('/api/session', { email: 'ada@example.test', password: PASSWORD }).expect(401);
    await fresh.post('/api/session', { email: 'ada@example.test', password: 'a brand new password' }).expect(200);
  });

  it('answers 202 for an unknown address without sending anything', async () => {
    const guest = await anonymous(app);
    await guest.post('/api/password-resets', { email: 'nobody@example.test' }).expect(202);
    expect(mailCount()).toBe(0);
  });

  it('answers a used link and an expired link with 410', async () => {
    const guest = await anonymous(app);
    await guest.post('/api/password-resets', { email: 'ada@example.test' }).expect(202);
    const token = linkFromMail(app, 'ada@example.test', 'reset-password');
    guest.csrf = (await guest.post(`/api/password-resets/${token}`, { password: 'a brand new password' }).expect(200)).body.csrfToken;
    const reused = await (await anonymous(app)).post(`/api/password-resets/${token}`, { password: 'yet another password' });
    expect(reused.status).toBe(410);
    expect(reused.body.error).toMatch(/already been used/);

    await guest.post('/api/password-resets', { email: 'ada@example.test' }).expect(202);
    const second = linkFromMail(app, 'ada@example.test', 'reset-password');
    app.db.sqlite.prepare('update password_resets set expires_at = ? where used_at is null').run(Date.now() - 1);
    const expired = await guest.get(`/api/password-resets/${second}`).expect(410);
    expect(expired.body.error).toMatch(/expired/);
  });

  it('answers an unknown link with 404 and a short password with a field message, changing nothing', async () => {
    const guest = await anonymous(app);
    await guest.get('/api/password-resets/unknown-token').expect(404);
    await guest.post('/api/password-resets', { email: 'ada@example.test' }).expect(202);
    const token = linkFromMail(app, 'ada@example.test', 'reset-password');
    const bad = await guest.post(`/api/password-resets/${token}`, { password: 'short' }).expect(400);
    expect(bad.body.fields).toEqual({ password: 'Use at least 10 characters' });
    await guest.get(`/api/password-resets/${token}`).expect(200);
    await (await anonymous(app)).post('/api/session', { email: 'ada@example.test', password: PASSWORD }).expect(200);
  });

  it('rate limits reset requests with 429', async () => {
    const limited = await testApp({ rateLimit: { reset: 1 } });
    try {
      const guest = await anonymous(limited);
      await guest.post('/api/password-resets', { email: 'x@example.test' }).expect(202);
      const res = await guest.post('/api/password-resets', { email: 'x@example.test' }).expect(429);
      expect(res.body.error).toMatch(/Too many password reset requests/);
    } finally {
      limited.close();
    }
  });

  it('answers without waiting for the mail server, so an existing account takes no longer than an unknown one', async () => {
    // a mail server that accepts connections and says nothing until the test lets it go
    const sockets: net.Socket[] = [];
    const silent = net.createServer((socket) => sockets.push(socket));
    await new Promise<void>((resolve) => silent.listen(0, '127.0.0.1', resolve));
    const port = (silent.address() as net.AddressInfo).port;
    const smtpApp = await testApp({ smtpUrl: `smtp://127.0.0.1:${port}` });
    try {
      await makeUser(smtpApp, 'ada@example.test', 'Ada');
      const guest = await anonymous(smtpApp);
      // both answer while the mail to Ada is still waiting for the server's greeting
      await guest.post('/api/password-resets', { email: 'ada@example.test' }).expect(202);
      await guest.post('/api/password-resets', { email: 'nobody@example.test' }).expect(202);
      await expect.poll(() => sockets.length).toBe(1);
      const resets = () => (smtpApp.db.sqlite.prepare('select count(*) as n from password_resets').get() as { n: number }).n;
      expect(resets()).toBe(1);
      // the server hangs up: the mail fails later and its link is withdrawn
      const log = vi.spyOn(console, 'error').mockImplementation(() => {});
      sockets.forEach((s) => s.destroy());
      await expect.poll(resets).toBe(0);
      expect(log).toHaveBeenCalledWith('[flagline] password reset mail failed:', expect.anything());
      log.mockRestore();
    } finally {
      sockets.forEach((s) => s.destroy());
      silent.close();
      smtpApp.close();
    }
  });
});

