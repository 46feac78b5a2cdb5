import { afterEach, describe, expect, it } from 'vitest';
import { createApp } from '../../server/index';
import { openDb, type DbHandle } from '../../server/db/client';
import { DEMO_PASSWORD } from '../../server/seed/demo';
import { Client, TEST_BCRYPT_COST, makeUser, signedIn, testApp } from './helpers';

let handle: DbHandle | undefined;
afterEach(() => handle?.close());

describe('demo mode', () => {
  it('seeds the parish office rig with three accounts of three roles and shows them at sign-in', async () => {
    handle = openDb(':memory:');
    const app = await createApp({ db: handle, demo: true, bcryptCost: TEST_BCRYPT_COST, smtpUrl: '' });
    const info = (await new Client(app.app).get('/api/session').expect(200)).body;
    expect(info.demo).toEqual({
      password: 'flagline-demo',
      accounts: [
        { email: 'owner@demo.test', role: 'owner' },
        { email: 'analyst@demo.test', role: 'analyst' },
        { email: 'viewer@demo.test', role: 'viewer' },
      ],
    });
    const viewer = await signedIn(app, 'viewer@demo.test', DEMO_PASSWORD);
    const [rig] = (await viewer.get('/api/rigs').expect(200)).body;
    expect(rig).toMatchObject({
      name: 'Wrenfield Parish Office, 1983',
      lineSettings: { bitRate: 800000, encoding: 'nrzi', clockEdge: 'rising', bitOrder: 'lsb-first' },
      myRole: 'viewer',
      stationCount: 4,
      memberCount: 3,
    });
    const detail = (await viewer.get(`/api/rigs/${rig.id}`).expect(200)).body;
    expect(detail.stations.map((s: { address: number; name: string; role: string }) => [s.address, s.name, s.role])).toEqual([
      [0x10, 'Vestry file server', 'server'],
      [0x21, 'Registry desk', 'station'],
      [0x22, 'Treasurer desk', 'station'],
      [0x23, 'Choir office', 'station'],
    ]);
    await viewer.patch(`/api/rigs/${rig.id}`, { name: 'Mine' }).expect(403);
    // the second scenario: its own rig, after the main one in the newest-first list
    const all = (await viewer.get('/api/rigs').expect(200)).body as { name: string; stationCount: number }[];
    expect(all.map((r) => r.name)).toEqual(['Wrenfield Parish Office, 1983', 'Saltmarsh Ferry Company, 1984']);
    expect(all[1].stationCount).toBe(3);
    app.close();
  });

  it('seeds only an empty database, once', async () => {
    handle = openDb(':memory:');
    (await createApp({ db: handle, demo: true, bcryptCost: TEST_BCRYPT_COST, smtpUrl: '' })).close();
    (await createApp({ db: handle, demo: true, bcryptCost: TEST_BCRYPT_COST, smtpUrl: '' })).close();
    // the parish office and the Saltmarsh ferry company
    expect((handle.sqlite.prepare('select count(*) as n from rigs').get() as { n: number }).n).toBe(2);
    expect((handle.sqlite.prepare('select count(*) as n from users').get() as { n: number }).n).toBe(3);
  });

  it('does not seed a database that already has accounts, and hides demo accounts outside demo mode', async () => {
    const app = await testApp();
    await makeUser(app, 'someone@example.test');
    const again = await createApp({ db: app.db, demo: true, bcryptCost: TEST_BCRYPT_COST, smtpUrl: '' });
    expect((app.db.sqlite.prepare('select count(*) as n from rigs').get() as { n: number }).n).toBe(0);
    expect((await new Client(again.app).get('/api/session')).body.demo).toBeNull();
    again.close();
    app.close();
  });
});
