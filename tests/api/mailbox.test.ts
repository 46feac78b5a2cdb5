import { spawn } from 'node:child_process';
import fs from 'node:fs';
import os from 'node:os';
import path from 'node:path';
import { afterEach, describe, expect, it } from 'vitest';
import { repoRoot } from '../../server/db/client';
import type { FlaglineApp } from '../../server/index';
import { GENEROUS_LIMITS, addMember, anonymous, linkFromMail, makeUser, rigBody, signedIn, testApp } from './helpers';

let apps: FlaglineApp[] = [];
afterEach(() => {
  apps.forEach((a) => a.close());
  apps = [];
});
const track = (a: FlaglineApp) => (apps.push(a), a);
const mailCount = (app: FlaglineApp) => (app.db.sqlite.prepare('select count(*) as n from mail_messages').get() as { n: number }).n;

describe('development mailbox', () => {
  it("does not show a viewer who creates a rig of their own another account's reset link", async () => {
    const app = track(await testApp());
    await makeUser(app, 'olive@example.test', 'Olive Owner');
    const viewerId = await makeUser(app, 'vic@example.test', 'Vic Viewer');
    const olive = await signedIn(app, 'olive@example.test');
    const rigId = (await olive.post('/api/rigs', rigBody('Parish rig')).expect(201)).body.id;
    addMember(app, rigId, viewerId, 'viewer');

    const vic = await signedIn(app, 'vic@example.test');
    await vic.post('/api/rigs', rigBody("Vic's own rig")).expect(201);
    await (await anonymous(app)).post('/api/password-resets', { email: 'olive@example.test' }).expect(202);
    const token = linkFromMail(app, 'olive@example.test', 'reset-password');

    const seenByVic = await vic.get('/api/dev/mailbox').expect(200);
    expect(seenByVic.body).toEqual([]);
    expect(JSON.stringify(seenByVic.body)).not.toContain(token);

    const seenByOlive = await olive.get('/api/dev/mailbox').expect(200);
    expect(seenByOlive.body).toHaveLength(1);
    expect(seenByOlive.body[0]).toMatchObject({ to: 'olive@example.test', subject: 'Reset your Flagline password' });
    expect(seenByOlive.body[0].text).toContain(`/reset-password/${token}`);
  });

  it('exists only in demo or development mode: elsewhere, without SMTP, mail is off and says so', async () => {
    const app = track(await testApp({ mailbox: undefined, demo: false, dev: false }));
    await makeUser(app, 'olive@example.test', 'Olive Owner');
    const olive = await signedIn(app, 'olive@example.test');
    expect((await olive.get('/api/session')).body).toMatchObject({ devMailbox: false, mailOff: true });
    const rigId = (await olive.post('/api/rigs', rigBody()).expect(201)).body.id;
    await olive.get('/api/dev/mailbox').expect(404);

    const invite = await olive.post(`/api/rigs/${rigId}/invitations`, { email: 'new@example.test', role: 'viewer' }).expect(503);
    expect(invite.body.error).toMatch(/cannot send e-mail \(FLAGLINE_SMTP_URL is not set\), so invitations cannot be mailed/);
    const guest = await anonymous(app);
    const known = await guest.post('/api/password-resets', { email: 'olive@example.test' }).expect(503);
    const unknown = await guest.post('/api/password-resets', { email: 'nobody@example.test' }).expect(503);
    expect(unknown.body).toEqual(known.body);
    expect(mailCount(app)).toBe(0);
    expect((app.db.sqlite.prepare('select count(*) as n from invitations').get() as { n: number }).n).toBe(0);
    expect((app.db.sqlite.prepare('select count(*) as n from password_resets').get() as { n: number }).n).toBe(0);

    const demo = track(await testApp({ mailbox: undefined, demo: true }));
    expect((await (await anonymous(demo)).get('/api/session')).body).toMatchObject({ devMailbox: true, mailOff: false });
  });

  it('says at start-up, in production without SMTP, that no mail will be sent', async () => {
    const dir = fs.mkdtempSync(path.join(os.tmpdir(), 'flagline-start-'));
    const child = spawn(process.execPath, ['--import', 'tsx', path.join(repoRoot, 'server/cli/start.ts')], {
      cwd: repoRoot,
      env: {
        ...process.env,
        NODE_ENV: 'production',
        PORT: '0',
        FLAGLINE_DB: path.join(dir, 'flagline.db'),
        FLAGLINE_DATA_DIR: dir,
        FLAGLINE_SKIP_BUILD: '1',
        FLAGLINE_SMTP_URL: '',
        FLAGLINE_DEMO: '',
        FLAGLINE_BCRYPT_COST: '4',
      },
      stdio: ['ignore', 'pipe', 'pipe'],
    });
    try {
      let out = '';
      await new Promise<void>((resolve, reject) => {
        child.stdout.on('data', (d) => {
          out += String(d);
          if (/Mail is OFF[\s\S]*FLAGLINE_SMTP_URL/.test(out) && /is running at/.test(out)) resolve();
        });
        child.stderr.on('data', (d) => (out += String(d)));
        child.once('exit', (code) => reject(new Error(`start exited with ${code}: ${out}`)));
      });
      expect(out).toMatch(/sends no\s+invitations or password-reset links/);
    } finally {
      child.kill('SIGTERM');
      await new Promise((r) => child.once('exit', r));
      fs.rmSync(dir, { recursive: true, force: true });
    }
  }, 90_000);
});

describe('mail headers and limits', () => {
  it('keeps a rig or person named with line breaks from adding header lines', async () => {
    const app = track(await testApp());
    await makeUser(app, 'olive@example.test', 'Olive\r\nBcc: everyone@example.test');
    const olive = await signedIn(app, 'olive@example.test');
    const rigId = (await olive.post('/api/rigs', rigBody('Parish\r\nBcc: victim@example.test\u2028X-Evil: 1')).expect(201)).body.id;
    await olive.post(`/api/rigs/${rigId}/invitations`, { email: 'new@example.test', role: 'viewer' }).expect(201);
    const mail = app.db.sqlite.prepare('select "to", subject, text from mail_messages').get() as { to: string; subject: string; text: string };
    expect(mail.to).toBe('new@example.test');
    expect(mail.subject).toBe('Olive Bcc: everyone@example.test invited you to the rig "Parish Bcc: victim@example.test X-Evil: 1" on Flagline');
    // eslint-disable-next-line no-control-regex -- the check is for control characters
    expect(mail.subject).not.toMatch(/[\u0000-\u001f\u007f-\u009f\u2028\u2029]/);
    // the body's first line stays one line too
    expect(mail.text.split('\n')[0]).toContain('"Parish Bcc: victim@example.test X-Evil: 1"');
  });

  it('limits invitations per recipient and per inviting user', async () => {
    const app = track(await testApp({ rateLimit: { ...GENEROUS_LIMITS, invitationsPerRecipient: 2, invitationsPerUser: 3 } }));
    await makeUser(app, 'olive@example.test', 'Olive Owner');
    const olive = await signedIn(app, 'olive@example.test');
    const rigId = (await olive.post('/api/rigs', rigBody()).expect(201)).body.id;
    const invite = (email: string) => olive.post(`/api/rigs/${rigId}/invitations`, { email, role: 'viewer' });
    await invite('a@example.test').expect(201);
    await invite('a@example.test').expect(201);
    const again = await invite('A@example.test').expect(429);
    expect(again.body.error).toMatch(/^a@example.test was invited 2 times in the last hour; try again in \d+ minutes?$/);
    await invite('b@example.test').expect(201);
    const busy = await invite('c@example.test').expect(429);
    expect(busy.body.error).toMatch(/^You sent 3 invitations in the last hour; try again in/);
    expect(mailCount(app)).toBe(3);
  });

  it('limits reset links per address the same way whether or not it has an account', async () => {
    const app = track(await testApp({ rateLimit: { ...GENEROUS_LIMITS, resetPerRecipient: 2 } }));
    await makeUser(app, 'olive@example.test', 'Olive Owner');
    const guest = await anonymous(app);
    const answers: Record<string, number[]> = {};
    for (const email of ['olive@example.test', 'nobody@example.test']) {
      answers[email] = [];
      for (let i = 0; i < 3; i++) answers[email].push((await guest.post('/api/password-resets', { email })).status);
    }
    expect(answers).toEqual({ 'olive@example.test': [202, 202, 429], 'nobody@example.test': [202, 202, 429] });
    const refused = await guest.post('/api/password-resets', { email: 'nobody@example.test' }).expect(429);
    expect(refused.body.error).toMatch(/^Several reset links were sent to this address in the last hour; use the newest one; try again in/);
    expect(mailCount(app)).toBe(2);
  });
});
