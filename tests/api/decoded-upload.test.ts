import fs from 'node:fs';
import path from 'node:path';
import { afterEach, describe, expect, it } from 'vitest';
import type { CaptureOverview, TimelineFrame, TimelinePage } from '../../shared/schemas';
import { buildWorld, closeWorld, put, upload, waitForJob, type World } from './captures-helpers';
import type { Client } from './helpers';
import { decodedFileOf, manifestCaptures, samplesDir } from './decoded-helpers';

const NDJSON = 'application/x-ndjson';

function sendDecoded(c: Client, rigId: number, body: string, type = NDJSON) {
  return c.agent.post(`/api/rigs/${rigId}/captures/decoded`).set('x-csrf-token', c.csrf).set('content-type', type).send(body);
}

async function allFrames(c: Client, base: string): Promise<TimelineFrame[]> {
  const out: TimelineFrame[] = [];
  let cursor: string | null = null;
  do {
    const res = await c.get(`${base}/timeline?limit=1000${cursor ? `&cursor=${encodeURIComponent(cursor)}` : ''}`).expect(200);
    const page = res.body as TimelinePage;
    for (const r of page.rows) if (r.type === 'frame') out.push(r);
    cursor = page.nextCursor;
  } while (cursor);
  return out;
}

/** what two decodes of one capture must agree on; ids and run numbers differ */
const comparable = (f: TimelineFrame) => {
  const { id: _id, ...rest } = f as TimelineFrame & Record<string, unknown>;
  return JSON.stringify(rest, (k, v) => (k === 'exchange' || k === 'noteCount' || k === 'exchangeId' ? undefined : v));
};

const sample = manifestCaptures().find((c) => c.file === 'wrenfield-registry-boot.vcd')!;
const sampleFile = fs.readFileSync(path.join(samplesDir, sample.file));

let w: World | null = null;
afterEach(async () => {
  if (w) await closeWorld(w);
  w = null;
});

describe('POST /api/rigs/:rigId/captures/decoded', () => {
  it('stores the frames decoded elsewhere with the same timeline, faults and exchanges as the server’s own decode of the file', async () => {
    w = await buildWorld();
    // the server's decode of the same file
    const up = await upload(w.analyst, w.rigId, sampleFile, sample.file).expect(201);
    const serverBase = `/api/rigs/${w.rigId}/captures/${up.body.id}`;
    await put(w.analyst, `${serverBase}/settings`, sample.settings).expect(200);
    await w.analyst.post(`${serverBase}/decode`).expect(202);
    expect((await waitForJob(w.analyst, serverBase)).state).toBe('done');

    const res = await sendDecoded(w.analyst, w.rigId, decodedFileOf(sampleFile, sample.file, sample.settings)).expect(201);
    expect(res.body).toMatchObject({ name: sample.file, size: sampleFile.length, sha256: up.body.sha256, samplesKept: false, status: 'decoded', format: 'vcd' });
    const localBase = `/api/rigs/${w.rigId}/captures/${res.body.id}`;

    const [server, local] = [await allFrames(w.viewer, serverBase), await allFrames(w.viewer, localBase)];
    expect(local.length).toBe(server.length);
    expect(local.length).toBeGreaterThan(50);
    expect(local.map(comparable)).toEqual(server.map(comparable));

    const [so, lo] = [(await w.viewer.get(`${serverBase}/overview`).expect(200)).body as CaptureOverview, (await w.viewer.get(`${localBase}/overview`).expect(200)).body as CaptureOverview];
    expect(lo.byStatus).toEqual(so.byStatus);
    expect(lo.links).toEqual(so.links);
    expect(lo.durationSeconds).toBeCloseTo(so.durationSeconds, 9);

    const [sx, lx] = [(await w.viewer.get(`${serverBase}/exchanges/stats`).expect(200)).body, (await w.viewer.get(`${localBase}/exchanges/stats`).expect(200)).body];
    expect(lx).toEqual(sx);
    const [sf, lf] = [(await w.viewer.get(`${serverBase}/faults`).expect(200)).body, (await w.viewer.get(`${localBase}/faults`).expect(200)).body];
    // The clock's period spread is measured on the samples, which stayed with the uploader: the
    // decoded upload has no octet-timing clock figures, and its budget line takes the bit rate
    // from the frames instead. Everything else is the same.
    const { octetTiming: sOctets, budget: sBudget, ...sRaces } = sf.races;
    const { octetTiming: lOctets, budget: lBudget, ...lRaces } = lf.races;
    expect(sOctets.clock).not.toBeNull();
    expect(lOctets).toEqual({ ...sOctets, clock: null });
    expect(lBudget.source).toBe('frames');
    expect(lBudget.cpuHz).toBe(sBudget.cpuHz);
    expect(lBudget.bitRate / sBudget.bitRate).toBeGreaterThan(0.9);
    expect(lBudget.bitRate / sBudget.bitRate).toBeLessThan(1.1);
    const strip = (v: unknown) => JSON.stringify(v).replace(/"(id|frameId|nextFrameId|retransmissionFrameId)":\d+/g, '');
    expect(strip({ ...lf, races: lRaces })).toBe(strip({ ...sf, races: sRaces }));

    // what needs the samples says why it cannot be done
    const frameId = local[0].id;
    const wave = await w.viewer.get(`${localBase}/frames/${frameId}/waveform`).expect(409);
    expect(wave.body.error).toMatch(/samples of this capture stayed on the uploader's machine/);
    await w.analyst.post(`${localBase}/decode`).expect(409);
    await w.viewer.get(`${localBase}/detection`).expect(409);
    await put(w.analyst, `${localBase}/settings`, sample.settings).expect(409);

    // deleting the browser-decoded capture keeps the server's file; deleting both removes it
    await w.owner.delete(localBase).expect(204);
    expect(fs.existsSync(path.join(w.env.dir, 'captures', up.body.sha256))).toBe(true);
    await w.owner.delete(serverBase).expect(204);
    expect(fs.existsSync(path.join(w.env.dir, 'captures', up.body.sha256))).toBe(false);
  });

  it('refuses malformed, incomplete and inconsistent files with a 4xx naming the problem, storing nothing', async () => {
    w = await buildWorld();
    const good = decodedFileOf(sampleFile, sample.file, sample.settings);
    const lines = good.trimEnd().split('\n');
    const cases: [string, string, number, RegExp, string?][] = [
      ['empty', '', 400, /empty/],
      ['not JSON', `${lines[0]}\n{oops\n${lines.slice(1).join('\n')}`, 400, /Line 2 of the decoded capture is not JSON/],
      ['another format', lines.join('\n').replace('"flagline-decoded"', '"something-else"'), 400, /Line 1 .*format "flagline-decoded"/],
      ['bad checksum', lines.join('\n').replace(/"sha256":"[0-9a-f]{64}"/, '"sha256":"xyz"'), 400, /SHA-256/],
      ['cut short', lines.slice(0, -5).join('\n'), 400, /no end line/],
      ['a frame missing', [...lines.slice(0, 3), ...lines.slice(4)].join('\n'), 400, /incomplete/],
      ['an unknown link', lines.join('\n').replace(/"type":"frame","link":"p1_txd"/, '"type":"frame","link":"p9_txd"'), 400, /"p9_txd" is not among the header's links/],
      ['odd hex', lines.join('\n').replace(/"bytes":"([0-9a-f]+)"/, '"bytes":"$1f"'), 400, /hex pairs/],
      ['multipart instead', good, 415, /application\/x-ndjson/, 'text/plain'],
    ];
    for (const [what, body, status, message, type] of cases) {
      const res = await sendDecoded(w.analyst, w.rigId, body, type);
      expect([what, res.status, res.body.error]).toEqual([what, status, expect.stringMatching(message)]);
    }
    expect((await w.viewer.get(`/api/rigs/${w.rigId}/captures`).expect(200)).body).toEqual([]);
    expect(fs.readdirSync(path.join(w.env.dir, 'tmp'))).toEqual([]);
    // a viewer may not upload
    await sendDecoded(w.viewer, w.rigId, good).expect(403);
  });

  it('refuses a file over the limit with 413, storing nothing', async () => {
    w = await buildWorld(undefined, 16 * 1024);
    const good = decodedFileOf(sampleFile, sample.file, sample.settings);
    expect(good.length).toBeGreaterThan(16 * 1024);
    const res = await sendDecoded(w.analyst, w.rigId, good).expect(413);
    expect(res.body.error).toMatch(/larger than the limit of/);
    expect((await w.viewer.get(`/api/rigs/${w.rigId}/captures`).expect(200)).body).toEqual([]);
    expect(fs.readdirSync(path.join(w.env.dir, 'tmp'))).toEqual([]);
  });
});
