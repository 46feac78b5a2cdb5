import { afterEach, beforeEach, describe, expect, it } from 'vitest';
import type { FlaglineApp } from '../../server/index';
import { Client, PASSWORD, addMember, anonymous, linkFromMail, makeUser, rigBody, signedIn, testApp } from './helpers';

let app: FlaglineApp;
let owner: Client;
let rigId: number;
beforeEach(async () => {
  app = await testApp();
  await makeUser(app, 'owner@example.test', 'Olive Owner');
  owner = await signedIn(app, 'owner@example.test');
  rigId = (await owner.post('/api/rigs', rigBody('Parish rig')).expect(201)).body.id;
});
afterEach(() => app.close());

const count = (sql: string, ...args: unknown[]) => (app.db.sqlite.prepare(sql).get(...args) as { n: number }).n;

async function invite(email: string, role = 'viewer') {
  const res = await owner.post(`/api/rigs/${rigId}/invitations`, { email, role }).expect(201);
  return { invitation: res.body, token: linkFromMail(app, email.toLowerCase(), 'invitations') };
}

describe('invitations', () => {
  it('mails a link, previews it, creates the account on accept and signs the new member in', async () => {
    const { invitation, token } = await invite('New.Person@Example.test', 'viewer');
    expect(invitation).toMatchObject({ rigId, email: 'new.person@example.test', role: 'viewer', invitedBy: 'Olive Owner' });
    expect(Date.parse(invitation.expiresAt) - Date.parse(invitation.createdAt)).toBe(7 * 24 * 3600 * 1000);

    const mail = app.db.sqlite.prepare('select "to", subject, html from mail_messages order by id desc limit 1').get() as { to: string; subject: string; html: string };
    expect(mail).toMatchObject({ to: 'new.person@example.test', subject: 'Olive Owner invited you to the rig "Parish rig" on Flagline' });
    expect(mail.html).toContain(`http://flagline.test/invitations/${token}`);
    // the invitation is the invitee's mail, not the inviter's
    expect((await owner.get('/api/dev/mailbox').expect(200)).body).toEqual([]);
    // only the hash is kept
    expect(count('select count(*) as n from invitations where token_hash = ?', token)).toBe(0);

    const pending = await owner.get(`/api/rigs/${rigId}/invitations`).expect(200);
    expect(pending.body).toEqual([invitation]);

    const guest = await anonymous(app);
    const preview = await guest.get(`/api/invitations/${token}`).expect(200);
    expect(preview.body).toEqual({ rigName: 'Parish rig', email: 'new.person@example.test', role: 'viewer', invitedBy: 'Olive Owner', accountExists: false });

    const accepted = await guest.post(`/api/invitations/${token}/accept`, { name: 'Nell Newcomer', password: 'a long new password' }).expect(200);
    expect(accepted.body).toMatchObject({ user: { email: 'new.person@example.test', name: 'Nell Newcomer' }, rigId });
    guest.csrf = accepted.body.csrfToken;
    const rig = await guest.get(`/api/rigs/${rigId}`).expect(200);
    expect(rig.body.myRole).toBe('viewer');
    await guest.patch(`/api/rigs/${rigId}`, { name: 'Mine now' }).expect(403);
    expect((await owner.get(`/api/rigs/${rigId}/invitations`).expect(200)).body).toEqual([]);
  });

  it('answers a reused link with 410 and a clear message', async () => {
    const { token } = await invite('nell@example.test');
    const guest = await anonymous(app);
    await guest.post(`/api/invitations/${token}/accept`, { name: 'Nell', password: 'a long new password' }).expect(200);
    const again = await (await anonymous(app)).get(`/api/invitations/${token}`).expect(410);
    expect(again.body.error).toMatch(/already been used/);
    const other = await anonymous(app);
    await other.post(`/api/invitations/${token}/accept`, { name: 'Nell', password: 'a long new password' }).expect(410);
  });

  it('answers an expired link with 410', async () => {
    const { token } = await invite('late@example.test');
    app.db.sqlite.prepare('update invitations set expires_at = ?').run(Date.now() - 1000);
    const guest = await anonymous(app);
    expect((await guest.get(`/api/invitations/${token}`).expect(410)).body.error).toMatch(/expired/);
    await guest.post(`/api/invitations/${token}/accept`, { name: 'Late', password: 'a long new password' }).expect(410);
    expect(count('select count(*) as n from users where email = ?', 'late@example.test')).toBe(0);
  });

  it('answers an unknown link with 404', async () => {
    const guest = await anonymous(app);
    expect((await guest.get('/api/invitations/not-a-real-token').expect(404)).body.error).toMatch(/not valid/);
    await guest.post('/api/invitations/not-a-real-token/accept', { name: 'X', password: 'a long new password' }).expect(404);
  });

  it('writes nothing when the accept body is bad: no account, no membership, link still usable', async () => {
    const { token } = await invite('careful@example.test');
    const guest = await anonymous(app);
    const short = await guest.post(`/api/invitations/${token}/accept`, { name: 'Cara', password: 'short' }).expect(400);
    expect(short.body.fields).toEqual({ password: 'Use at least 10 characters' });
    const noName = await guest.post(`/api/invitations/${token}/accept`, { password: 'a long new password' }).expect(400);
    expect(noName.body.fields).toEqual({ name: 'Enter your name' });
    expect(count('select count(*) as n from users where email = ?', 'careful@example.test')).toBe(0);
    expect(count('select count(*) as n from memberships where rig_id = ?', rigId)).toBe(1);
    expect(count('select count(*) as n from invitations where accepted_at is not null')).toBe(0);
    await guest.get(`/api/invitations/${token}`).expect(200);
  });

  it('lets an existing account accept with its own password and refuses a wrong one with 401', async () => {
    await makeUser(app, 'known@example.test', 'Kim Known');
    const { token } = await invite('known@example.test', 'analyst');
    const guest = await anonymous(app);
    expect((await guest.get(`/api/invitations/${token}`).expect(200)).body.accountExists).toBe(true);
    const wrong = await guest.post(`/api/invitations/${token}/accept`, { password: 'not my password' }).expect(401);
    expect(wrong.body.error).toMatch(/Wrong password for known@example.test/);
    expect(count('select count(*) as n from invitations where accepted_at is not null')).toBe(0);
    const ok = await guest.post(`/api/invitations/${token}/accept`, { password: PASSWORD, name: 'Ignored' }).expect(200);
    expect(ok.body.user).toMatchObject({ email: 'known@example.test', name: 'Kim Known' });
    guest.csrf = ok.body.csrfToken;
    expect((await guest.get(`/api/rigs/${rigId}`).expect(200)).body.myRole).toBe('analyst');
  });

  it('refuses to invite a current member with 409 and replaces an earlier pending invitation', async () => {
    const memberId = await makeUser(app, 'member@example.test');
    addMember(app, rigId, memberId, 'viewer');
    const res = await owner.post(`/api/rigs/${rigId}/invitations`, { email: 'member@example.test', role: 'analyst' }).expect(409);
    expect(res.body.error).toBe('member@example.test is already a member of this rig (viewer)');

    const first = await invite('twice@example.test', 'viewer');
    const second = await invite('twice@example.test', 'analyst');
    await (await anonymous(app)).get(`/api/invitations/${first.token}`).expect(404);
    const pending = (await owner.get(`/api/rigs/${rigId}/invitations`).expect(200)).body;
    expect(pending).toEqual([second.invitation]);
  });

  it('withdraws an invitation', async () => {
    const { invitation, token } = await invite('gone@example.test');
    await owner.delete(`/api/rigs/${rigId}/invitations/${invitation.id}`).expect(204);
    await owner.delete(`/api/rigs/${rigId}/invitations/${invitation.id}`).expect(404);
    await (await anonymous(app)).get(`/api/invitations/${token}`).expect(404);
  });

  it('gives per-field messages for a bad invitation', async () => {
    const res = await owner.post(`/api/rigs/${rigId}/invitations`, { email: 'nope', role: 'boss' }).expect(400);
    expect(res.body.fields).toEqual({ email: 'Enter a valid e-mail address', role: 'Choose one of: owner, analyst, viewer' });
    expect(count('select count(*) as n from invitations')).toBe(0);
    expect(count('select count(*) as n from mail_messages')).toBe(0);
  });
});

describe('development mailbox', () => {
  it('is open to everyone signed in, showing each person only their own mail', async () => {
    const viewerOnly = await makeUser(app, 'v@example.test');
    addMember(app, rigId, viewerOnly, 'viewer');
    await invite('v.other@example.test');
    const viewer = await signedIn(app, 'v@example.test');
    expect((await viewer.get('/api/dev/mailbox').expect(200)).body).toEqual([]);
    await (await anonymous(app)).get('/api/dev/mailbox').expect(401);
    expect((await owner.get('/api/session')).body).toMatchObject({ devMailbox: true, mailOff: false });
  });

  it('answers 404 when real SMTP is configured', async () => {
    const smtpApp = await testApp({ smtpUrl: 'smtp://127.0.0.1:1' });
    try {
      await makeUser(smtpApp, 'o@example.test');
      const o = await signedIn(smtpApp, 'o@example.test');
      await o.post('/api/rigs', rigBody()).expect(201);
      expect((await o.get('/api/session')).body.devMailbox).toBe(false);
      await o.get('/api/dev/mailbox').expect(404);
    } finally {
      smtpApp.close();
    }
  });

  it('withdraws the invitation when its mail cannot be sent', async () => {
    const smtpApp = await testApp({ smtpUrl: 'smtp://127.0.0.1:1' });
    try {
      await makeUser(smtpApp, 'o@example.test');
      const o = await signedIn(smtpApp, 'o@example.test');
      const rig = (await o.post('/api/rigs', rigBody()).expect(201)).body;
      const res = await o.post(`/api/rigs/${rig.id}/invitations`, { email: 'x@example.test', role: 'viewer' }).expect(502);
      expect(res.body.error).toMatch(/could not be sent; nothing was saved/);
      expect((smtpApp.db.sqlite.prepare('select count(*) as n from invitations').get() as { n: number }).n).toBe(0);
    } finally {
      smtpApp.close();
    }
  });
});
