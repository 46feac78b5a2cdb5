import fs from 'node:fs';
import path from 'node:path';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import type { CaptureOverview, CaptureSummaryRow } from '../../shared/schemas';
import { openDb, type DbHandle } from '../../server/db/client';
import { createApp } from '../../server/index';
import { DEMO_PASSWORD } from '../../server/seed/demo';
import { samplesDir } from '../../server/seed/demo-captures';
import { tempDataDir, waitForJob } from './captures-helpers';
import { TEST_BCRYPT_COST, signedIn, type Client } from './helpers';

interface Expected {
  frames: Record<string, Record<string, number>>;
}
const manifest = JSON.parse(fs.readFileSync(path.join(samplesDir(), 'manifest.json'), 'utf8')) as {
  captures: { file: string; expected: Expected }[];
};

describe('demo mode on a database file', () => {
  const env = tempDataDir();
  let handle: DbHandle;
  let app: Awaited<ReturnType<typeof createApp>>;
  let viewer: Client;
  let rigId = 0;
  beforeAll(async () => {
    handle = openDb(env.dbPath);
    app = await createApp({ db: handle, demo: true, bcryptCost: TEST_BCRYPT_COST, smtpUrl: '', dataDir: env.dir });
    viewer = await signedIn(app, 'viewer@demo.test', DEMO_PASSWORD);
    rigId = (await viewer.get('/api/rigs').expect(200)).body[0].id;
  });
  afterAll(async () => {
    await app.jobs.close();
    app.close();
    handle.close();
    env.cleanup();
  });

  it('loads every sample capture into the demo rig and decodes each to the frames it was made with', async () => {
    const list = (await viewer.get(`/api/rigs/${rigId}/captures`).expect(200)).body as CaptureSummaryRow[];
    expect(list.map((c) => c.name).sort()).toEqual(manifest.captures.map((c) => c.file).sort());
    for (const entry of manifest.captures) {
      const c = list.find((x) => x.name === entry.file)!;
      const url = `/api/rigs/${rigId}/captures/${c.id}`;
      const job = await waitForJob(viewer, url, undefined, 120_000);
      expect(job.state, `${entry.file}: ${job.error}`).toBe('done');
      const overview = (await viewer.get(`${url}/overview`).expect(200)).body as CaptureOverview;
      // the manifest was written by the encoder that made the sample: it is what a decode must find
      const want: Record<string, number> = {};
      for (const perLink of Object.values(entry.expected.frames)) {
        for (const [status, n] of Object.entries(perLink)) want[status] = (want[status] ?? 0) + n;
      }
      for (const [status, n] of Object.entries(want)) expect(overview.byStatus[status as keyof typeof overview.byStatus], `${entry.file} ${status}`).toBe(n);
    }
    // every sample is decoded in turn by the one decode queue: allow each its own wait
  }, 60_000 * manifest.captures.length);
});
