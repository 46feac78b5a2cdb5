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
  otherRigs: { name: string; captures: { file: string; expected: Expected & { exchanges: { total: number } } }[] }[];
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

  it('seeds the second scenario as its own rig, decoded with its reference field map', async () => {
    const rigsSeen = (await viewer.get('/api/rigs').expect(200)).body as { id: number; name: string }[];
    for (const scenario of manifest.otherRigs) {
      const rig = rigsSeen.find((r) => r.name === scenario.name)!;
      expect(rig, scenario.name).toBeDefined();
      const list = (await viewer.get(`/api/rigs/${rig.id}/captures`).expect(200)).body as CaptureSummaryRow[];
      expect(list.map((c) => c.name).sort()).toEqual(scenario.captures.map((c) => c.file).sort());
      for (const entry of scenario.captures) {
        const c = list.find((x) => x.name === entry.file)!;
        const url = `/api/rigs/${rig.id}/captures/${c.id}`;
        const job = await waitForJob(viewer, url, undefined, 120_000);
        expect(job.state, `${entry.file}: ${job.error}`).toBe('done');
        let layer = (await viewer.get(`${url}/field-map`).expect(200)).body as { mapName: string; current: { exchanges: number; files: number } | null };
        for (let i = 0; i < 200 && !layer.current; i++) {
          await new Promise((r) => setTimeout(r, 100));
          layer = (await viewer.get(`${url}/field-map`).expect(200)).body;
        }
        expect(layer.mapName).toBe('Saltmarsh ledger envelope');
        // the encoder's count of exchanges (manifest) is what the reference map must find
        expect(layer.current?.exchanges, entry.file).toBe(entry.expected.exchanges.total);
        // its files come from the map's own file calls, not the CP/M ones
        expect(layer.current?.files, entry.file).toBe((entry.expected as unknown as { files: unknown[] }).files.length);
      }
    }
  }, 120_000);
});
