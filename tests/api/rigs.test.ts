import { afterEach, beforeEach, describe, expect, it } from 'vitest';
import type { FlaglineApp } from '../../server/index';
import { Client, addMember, makeUser, rigBody, signedIn, testApp } from './helpers';

let app: FlaglineApp;
let owner: Client;
beforeEach(async () => {
  app = await testApp();
  await makeUser(app, 'owner@example.test', 'Olive Owner');
  owner = await signedIn(app, 'owner@example.test');
});
afterEach(() => app.close());

const count = (table: string) => (app.db.sqlite.prepare(`select count(*) as n from ${table}`).get() as { n: number }).n;

describe('rigs', () => {
  it('creates a rig with its creator as owner and lists it', async () => {
    const res = await owner.post('/api/rigs', rigBody('Bench rig')).expect(201);
    expect(res.body).toMatchObject({
      name: 'Bench rig',
      description: 'Two stations on the bench',
      lineSettings: { bitRate: 800000, encoding: 'nrzi', clockEdge: 'rising', bitOrder: 'lsb-first' },
      myRole: 'owner',
      stationCount: 0,
      memberCount: 1,
      stations: [],
    });
    expect(new Date(res.body.createdAt).toISOString()).toBe(res.body.createdAt);
    const list = await owner.get('/api/rigs').expect(200);
    expect(list.body).toHaveLength(1);
    expect(list.body[0]).not.toHaveProperty('stations');
    expect(list.body[0].id).toBe(res.body.id);
  });

  it('answers a malformed rig with a message for each field', async () => {
    const res = await owner
      .post('/api/rigs', { name: '  ', lineSettings: { bitRate: 12.5, encoding: 'manchester', clockEdge: 'rising' } })
      .expect(400);
    expect(res.body.error).toBe('Some fields need attention');
    expect(res.body.fields).toEqual({
      name: 'Give the rig a name',
      'lineSettings.bitRate': 'Use a whole number of bit/s',
      'lineSettings.encoding': 'Choose one of: nrz, nrzi',
      'lineSettings.bitOrder': 'Choose one of: lsb-first, msb-first',
    });
    expect(count('rigs')).toBe(0);
    const empty = await owner.post('/api/rigs').expect(400);
    expect(empty.body.error).toMatch(/malformed/);
  });

  it('edits only the fields sent, keeping the description when only the name changes', async () => {
    const rig = (await owner.post('/api/rigs', rigBody()).expect(201)).body;
    const renamed = await owner.patch(`/api/rigs/${rig.id}`, { name: 'Renamed rig' }).expect(200);
    expect(renamed.body).toMatchObject({ name: 'Renamed rig', description: 'Two stations on the bench' });
    const reset = await owner
      .patch(`/api/rigs/${rig.id}`, { lineSettings: { bitRate: '19200', encoding: 'nrz', clockEdge: 'falling', bitOrder: 'msb-first' } })
      .expect(200);
    expect(reset.body.lineSettings).toEqual({ bitRate: 19200, encoding: 'nrz', clockEdge: 'falling', bitOrder: 'msb-first' });
    const bad = await owner.patch(`/api/rigs/${rig.id}`, { lineSettings: { bitRate: 10 } }).expect(400);
    expect(bad.body.fields['lineSettings.bitRate']).toBe('At least 50 bit/s');
  });

  it('deletes a rig with its stations, members and invitations', async () => {
    const rig = (await owner.post('/api/rigs', rigBody()).expect(201)).body;
    await owner.post(`/api/rigs/${rig.id}/stations`, { address: 1, name: 'Server', role: 'server' }).expect(201);
    await owner.post(`/api/rigs/${rig.id}/invitations`, { email: 'new@example.test', role: 'viewer' }).expect(201);
    await owner.delete(`/api/rigs/${rig.id}`).expect(204);
    await owner.get(`/api/rigs/${rig.id}`).expect(404);
    expect([count('rigs'), count('stations'), count('memberships'), count('invitations')]).toEqual([0, 0, 0, 0]);
  });

  it('answers unknown and malformed rig ids with 404', async () => {
    expect((await owner.get('/api/rigs/999').expect(404)).body).toEqual({ error: 'No rig with id 999' });
    await owner.get('/api/rigs/abc').expect(404);
    await owner.get('/api/rigs/0').expect(404);
    await owner.patch('/api/rigs/999', { name: 'x' }).expect(404);
  });
});

describe('stations', () => {
  it('adds, edits and deletes stations, addresses given in decimal or hex', async () => {
    const rig = (await owner.post('/api/rigs', rigBody()).expect(201)).body;
    const server = await owner.post(`/api/rigs/${rig.id}/stations`, { address: '0x10', name: 'File server', role: 'server' }).expect(201);
    expect(server.body).toEqual({ id: server.body.id, rigId: rig.id, address: 16, name: 'File server', role: 'server' });
    const desk = await owner.post(`/api/rigs/${rig.id}/stations`, { address: 33, name: 'Desk', role: 'station' }).expect(201);
    const edited = await owner.patch(`/api/rigs/${rig.id}/stations/${desk.body.id}`, { name: 'Front desk' }).expect(200);
    expect(edited.body).toMatchObject({ address: 33, name: 'Front desk', role: 'station' });
    const detail = await owner.get(`/api/rigs/${rig.id}`).expect(200);
    expect(detail.body.stations.map((s: { address: number }) => s.address)).toEqual([16, 33]);
    expect(detail.body.stationCount).toBe(2);
    await owner.delete(`/api/rigs/${rig.id}/stations/${server.body.id}`).expect(204);
    await owner.delete(`/api/rigs/${rig.id}/stations/${server.body.id}`).expect(404);
  });

  it('refuses a second station on a taken address with 409', async () => {
    const rig = (await owner.post('/api/rigs', rigBody()).expect(201)).body;
    await owner.post(`/api/rigs/${rig.id}/stations`, { address: 16, name: 'File server', role: 'server' }).expect(201);
    const dup = await owner.post(`/api/rigs/${rig.id}/stations`, { address: '0x10', name: 'Other', role: 'station' }).expect(409);
    expect(dup.body.error).toBe('Address 0x10 is already used by "File server" on this rig');
    const other = await owner.post(`/api/rigs/${rig.id}/stations`, { address: 17, name: 'Other', role: 'station' }).expect(201);
    await owner.patch(`/api/rigs/${rig.id}/stations/${other.body.id}`, { address: 16 }).expect(409);
  });

  it('gives per-field messages for a bad station and 404 for a station of another rig', async () => {
    const rig = (await owner.post('/api/rigs', rigBody()).expect(201)).body;
    const bad = await owner.post(`/api/rigs/${rig.id}/stations`, { address: 256, name: '', role: 'printer' }).expect(400);
    expect(bad.body.fields).toEqual({
      address: 'Enter an address 0–255',
      name: 'Give the station a name',
      role: 'Choose one of: server, station',
    });
    const other = (await owner.post('/api/rigs', rigBody('Other rig')).expect(201)).body;
    const st = await owner.post(`/api/rigs/${other.id}/stations`, { address: 1, name: 'S', role: 'server' }).expect(201);
    await owner.patch(`/api/rigs/${rig.id}/stations/${st.body.id}`, { name: 'x' }).expect(404);
    await owner.delete(`/api/rigs/${rig.id}/stations/${st.body.id}`).expect(404);
  });
});

describe('members', () => {
  it('lists members, changes a role and lets a member leave', async () => {
    const rig = (await owner.post('/api/rigs', rigBody()).expect(201)).body;
    const viewerId = await makeUser(app, 'vera@example.test', 'Vera Viewer');
    addMember(app, rig.id, viewerId, 'viewer');
    const list = await owner.get(`/api/rigs/${rig.id}/members`).expect(200);
    expect(list.body).toEqual([
      { userId: expect.any(Number), email: 'owner@example.test', name: 'Olive Owner', role: 'owner' },
      { userId: viewerId, email: 'vera@example.test', name: 'Vera Viewer', role: 'viewer' },
    ]);
    const changed = await owner.patch(`/api/rigs/${rig.id}/members/${viewerId}`, { role: 'analyst' }).expect(200);
    expect(changed.body.role).toBe('analyst');
    const bad = await owner.patch(`/api/rigs/${rig.id}/members/${viewerId}`, { role: 'admin' }).expect(400);
    expect(bad.body.fields.role).toBe('Choose one of: owner, analyst, viewer');
    const vera = await signedIn(app, 'vera@example.test');
    await vera.delete(`/api/rigs/${rig.id}/members/${viewerId}`).expect(204);
    await vera.get(`/api/rigs/${rig.id}`).expect(403);
    await owner.patch(`/api/rigs/${rig.id}/members/${viewerId}`, { role: 'viewer' }).expect(404);
  });

  it('refuses to demote or remove the last owner with 409', async () => {
    const rig = (await owner.post('/api/rigs', rigBody()).expect(201)).body;
    const me = (await owner.get('/api/session')).body.user.id;
    const res = await owner.patch(`/api/rigs/${rig.id}/members/${me}`, { role: 'viewer' }).expect(409);
    expect(res.body.error).toMatch(/at least one owner/);
    await owner.delete(`/api/rigs/${rig.id}/members/${me}`).expect(409);
    const second = await makeUser(app, 'co@example.test');
    addMember(app, rig.id, second, 'owner');
    await owner.patch(`/api/rigs/${rig.id}/members/${me}`, { role: 'analyst' }).expect(200);
  });
});
