// The rig's answer timeout decides when a request counts as unanswered in the call layer.
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import type { CaptureSummaryRow, ExchangePage } from '../../shared/schemas';
import { openDb, type DbHandle } from '../../server/db/client';
import { createApp } from '../../server/index';
import { DEMO_PASSWORD } from '../../server/seed/demo';
import { tempDataDir, waitForJob } from './captures-helpers';
import { TEST_BCRYPT_COST, signedIn, type Client } from './helpers';

describe('the rig answer timeout', () => {
  const env = tempDataDir();
  let handle: DbHandle;
  let app: Awaited<ReturnType<typeof createApp>>;
  let owner: Client;
  let rigId = 0;
  let url = '';
  beforeAll(async () => {
    handle = openDb(env.dbPath);
    app = await createApp({ db: handle, demo: true, bcryptCost: TEST_BCRYPT_COST, smtpUrl: '', dataDir: env.dir });
    owner = await signedIn(app, 'owner@demo.test', DEMO_PASSWORD);
    rigId = (await owner.get('/api/rigs').expect(200)).body[0].id;
    const list = (await owner.get(`/api/rigs/${rigId}/captures`).expect(200)).body as CaptureSummaryRow[];
    url = `/api/rigs/${rigId}/captures/${list.find((c) => c.name === 'wrenfield-session-replacement.raw')!.id}`;
    for (const c of list) await waitForJob(owner, `/api/rigs/${rigId}/captures/${c.id}`, undefined, 120_000);
  }, 300_000);
  afterAll(async () => {
    await app.jobs.close();
    app.close();
    handle.close();
    env.cleanup();
  });

  it('is 500 ms unless the owner sets it, and refuses values outside 1 ms … 60 s with a field message', async () => {
    expect((await owner.get(`/api/rigs/${rigId}`).expect(200)).body.responseTimeoutMs).toBe(500);
    const bad = await owner.patch(`/api/rigs/${rigId}`, { responseTimeoutMs: 0 }).expect(400);
    expect(bad.body.fields.responseTimeoutMs).toBe('At least 1 ms');
    const kept = await owner.patch(`/api/rigs/${rigId}`, { name: 'Renamed' }).expect(200);
    expect(kept.body.responseTimeoutMs).toBe(500);
  });

  it('counts as unanswered every request whose answer came later than the timeout, once decoded again', async () => {
    const before = (await owner.get(`${url}/exchanges?sort=rtt-desc&limit=1000`).expect(200)).body as ExchangePage;
    const slowest = before.rows.find((r) => r.rttSeconds !== null)!.rttSeconds!;
    const unansweredBefore = before.rows.filter((r) => r.outcome === 'unanswered').length;
    // a timeout just under the slowest answer turns at least that exchange into an unanswered one
    const timeoutMs = Math.max(1, Math.floor(slowest * 1000) - 1);
    const late = before.rows.filter((r) => r.rttSeconds !== null && r.rttSeconds * 1000 > timeoutMs).length;
    expect(late).toBeGreaterThan(0);
    expect((await owner.patch(`/api/rigs/${rigId}`, { responseTimeoutMs: timeoutMs }).expect(200)).body.responseTimeoutMs).toBe(timeoutMs);
    await owner.post(`${url}/decode`).expect(202);
    const job = await waitForJob(owner, url, undefined, 120_000);
    expect(job.state).toBe('done');
    const after = (await owner.get(`${url}/exchanges?limit=1000`).expect(200)).body as ExchangePage;
    expect(after.rows.filter((r) => r.outcome === 'unanswered').length).toBeGreaterThanOrEqual(unansweredBefore + late);
  });
});
