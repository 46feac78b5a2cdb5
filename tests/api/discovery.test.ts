import fs from 'node:fs';
import path from 'node:path';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import type { CaptureDiscovery, CaptureFieldHints, CaptureOverview } from '../../shared/schemas';
import { samplesDir } from '../../server/seed/demo-captures';
import { buildWorld, closeWorld, put, upload, waitForJob, type World } from './captures-helpers';

// The settings finder and field hints through the API, on the second demo protocol's frame log
// (samples/, made by our encoder; its manifest entry says which way each link goes).
const manifest = JSON.parse(fs.readFileSync(path.join(samplesDir(), 'manifest.json'), 'utf8')) as {
  otherRigs: { captures: { file: string; settings: { links: { channel: string; direction: string; stationAddress: number }[] } }[] }[];
};
const entry = manifest.otherRigs[0].captures.find((c) => c.file === 'saltmarsh-office.framelog')!;

async function discovered(w: World, url: string): Promise<CaptureDiscovery> {
  for (let i = 0; i < 300; i++) {
    const d = (await w.viewer.get(`${url}/discovery`).expect(200)).body as CaptureDiscovery;
    if (d.state !== 'running') return d;
    await new Promise((r) => setTimeout(r, 50));
  }
  throw new Error('the finder did not finish');
}

describe('discovery API', () => {
  let w: World;
  let url = '';
  beforeAll(async () => {
    w = await buildWorld();
    const file = fs.readFileSync(path.join(samplesDir(), entry.file));
    const row = (await upload(w.analyst, w.rigId, file, entry.file).expect(201)).body as { id: number };
    url = `/api/rigs/${w.rigId}/captures/${row.id}`;
  });
  afterAll(() => closeWorld(w));

  it('finds the settings, each link’s direction and station, and ranks the alternatives with evidence', async () => {
    const d = await discovered(w, url);
    expect(d.state).toBe('done');
    expect(d.found).toBe(true);
    const best = d.candidates[0];
    // CRC catalogue: the frame log's FCS is CRC-16/IBM-SDLC; the 32-bit one matches no frame
    expect(best.fcs).toBe(16);
    expect(d.candidates.find((c) => c.fcs === 32)?.good).toBe(0);
    expect(best.evidence).toMatch(/good/);
    for (const l of entry.settings.links) {
      const link = best.settings.links!.find((x) => x.channel === l.channel)!;
      expect(link, l.channel).toMatchObject({ direction: l.direction, stationAddress: l.stationAddress });
      expect(d.directions.find((v) => v.link === l.channel)!.reasons.length).toBeGreaterThan(0);
    }
    expect(d.roster.map((s) => s.address).sort()).toEqual([...new Set(entry.settings.links.map((l) => l.stationAddress))].sort());
  });

  it('a decode with the accepted settings gives field hints by direction and selector, with frame ids behind them', async () => {
    const d = await discovered(w, url);
    await put(w.analyst, `${url}/settings`, d.candidates[0].settings).expect(200);
    await w.analyst.post(`${url}/decode`).expect(202);
    const job = await waitForJob(w.viewer, url);
    expect(job.state).toBe('done');
    const overview = (await w.viewer.get(`${url}/overview`).expect(200)).body as CaptureOverview;
    expect(overview.links.every((l) => l.direction !== 'unknown')).toBe(true);
    const h = (await w.viewer.get(`${url}/field-hints`).expect(200)).body as CaptureFieldHints;
    expect(h.report.requests).toBeGreaterThan(0);
    expect(h.report.responses).toBeGreaterThan(0);
    expect(h.skippedLinks).toEqual([]);
    const requests = h.report.groups.find((g) => g.direction === 'request' && g.selector === null)!;
    expect(requests.hints.find((x) => x.role === 'length')).toMatchObject({ offset: 1 });
    const named = requests.hints.flatMap((x) => x.supporting).map((r) => `${r.link}:${r.seq}`);
    expect(named.some((k) => h.frameIds[k] !== undefined)).toBe(true);
    const none = (await w.viewer.get(`${url}/field-hints?selector=none`).expect(200)).body as CaptureFieldHints;
    expect(none.report.groups.every((g) => g.selector === null)).toBe(true);
    const bad = await w.viewer.get(`${url}/field-hints?selector=x`).expect(400);
    expect(bad.body.error).toBeTruthy();
  });

  it('answers 409 with the reason when the capture is not decoded yet', async () => {
    const file = fs.readFileSync(path.join(samplesDir(), entry.file));
    const row = (await upload(w.analyst, w.rigId, file, 'again.framelog').expect(201)).body as { id: number };
    const res = await w.viewer.get(`/api/rigs/${w.rigId}/captures/${row.id}/field-hints`).expect(409);
    expect(res.body.error).toMatch(/decode it first/);
  });
});
