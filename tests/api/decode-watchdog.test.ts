import { fileURLToPath } from 'node:url';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import type { DecodeJob } from '../../shared/schemas';
import { buildWorld, closeWorld, put, recoveredRaw, upload, waitForJob, type World } from './captures-helpers';

const rawSettings = (names: string[]) => ({
  format: 'raw',
  sampleRate: 8e6,
  channelNames: names,
  clock: null,
  links: names.map((channel) => ({ channel })),
  bitRate: 1_000_000,
  encoding: 'nrzi',
  edge: 'rising',
});

describe('the decode watchdog', () => {
  let w: World;
  const saved = { stall: process.env.FLAGLINE_DECODE_STALL_S, worker: process.env.FLAGLINE_TEST_DECODE_WORKER };
  beforeAll(async () => {
    process.env.FLAGLINE_DECODE_STALL_S = '1.5';
    process.env.FLAGLINE_TEST_DECODE_WORKER = fileURLToPath(new URL('./support/stalling-decode-worker.mjs', import.meta.url));
    w = await buildWorld();
  });
  afterAll(async () => {
    await closeWorld(w);
    for (const [k, v] of [['FLAGLINE_DECODE_STALL_S', saved.stall], ['FLAGLINE_TEST_DECODE_WORKER', saved.worker]] as const) {
      if (v === undefined) delete process.env[k];
      else process.env[k] = v;
    }
  });

  it('fails a run that stops making progress, naming where it was; the worker goes, the queue moves on, the previous run stays', async () => {
    const cap = recoveredRaw(40);
    const a = (await upload(w.analyst, w.rigId, cap.file, 'first.bin')).body;
    const urlA = `/api/rigs/${w.rigId}/captures/${a.id}`;
    expect((await put(w.analyst, `${urlA}/settings`, rawSettings(['tx', 'rx']))).status).toBe(200);
    expect((await w.analyst.post(`${urlA}/decode`)).status).toBe(202);
    const first = await waitForJob(w.viewer, urlA);
    expect(first).toMatchObject({ state: 'done', frames: cap.sent.length });

    // the re-run stalls; a second capture's decode waits behind it
    expect((await put(w.analyst, `${urlA}/settings`, rawSettings(['tx', 'stall']))).status).toBe(200);
    expect((await w.analyst.post(`${urlA}/decode`)).status).toBe(202);
    const other = recoveredRaw(30);
    const b = (await upload(w.analyst, w.rigId, Buffer.concat([other.file, Buffer.alloc(1)]), 'second.bin')).body;
    const urlB = `/api/rigs/${w.rigId}/captures/${b.id}`;
    expect((await put(w.analyst, `${urlB}/settings`, rawSettings(['tx', 'rx']))).status).toBe(200);
    expect((await w.analyst.post(`${urlB}/decode`)).status).toBe(202);

    const stalled = await waitForJob(w.viewer, urlA, (j: DecodeJob) => j.state !== 'queued' && j.state !== 'running', 20_000);
    expect(stalled.state).toBe('failed');
    expect(stalled.error).toMatch(/no progress for 1\.5 s/);
    expect(stalled.error).toMatch(/byte 4,096 of 8,192, 0\.250000 s into the capture/);

    const next = await waitForJob(w.viewer, urlB, undefined, 20_000);
    expect(next.state).toBe('done');
    await w.app.jobs.idle();

    // the previous run is still the one shown
    const count = (await w.viewer.get(`${urlA}/timeline/count?events=0`)).body.count as number;
    expect(count).toBe(cap.sent.length);
  }, 60_000);
});
