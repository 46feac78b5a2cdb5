import fs from 'node:fs';
import path from 'node:path';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import type { DecodeJob } from '../../shared/schemas';
import { buildWorld, clockedVcd, closeWorld, put, recoveredRaw, reopenWorld, tempDataDir, upload, waitForJob, type World } from './captures-helpers';

const rawSettings = {
  format: 'raw',
  sampleRate: 8e6,
  channelNames: ['tx', 'rx'],
  clock: null,
  links: [{ channel: 'tx' }, { channel: 'rx' }],
  bitRate: 1_000_000,
  encoding: 'nrzi',
  edge: 'rising',
};

const visibleFrames = async (w: World, url: string) => (await w.viewer.get(`${url}/timeline/count?events=0`)).body.count as number;
const rowsOfJob = (w: World, jobId: number) =>
  (w.handle.sqlite.prepare('select (select count(*) from frames where job_id = ?) + (select count(*) from line_events where job_id = ?) as n').get(jobId, jobId) as { n: number }).n;

describe('decode runs that stop part way', () => {
  let w: World;
  let url = '';
  let firstRun = 0;
  // big enough that a run takes a few seconds, so it can be stopped while it writes
  const cap = recoveredRaw(12_000);
  beforeAll(async () => {
    w = await buildWorld();
    const res = await upload(w.analyst, w.rigId, cap.file, 'long-copy.bin');
    url = `/api/rigs/${w.rigId}/captures/${res.body.id}`;
    expect((await put(w.analyst, `${url}/settings`, rawSettings)).status).toBe(200);
  });
  afterAll(() => closeWorld(w));

  it('decodes the large capture once, reporting progress on the way', async () => {
    expect((await w.analyst.post(`${url}/decode`)).status).toBe(202);
    const progress: DecodeJob[] = [];
    const job = await waitForJob(w.viewer, url, (j) => {
      progress.push(j);
      return j.state === 'done' || j.state === 'failed';
    });
    expect(job).toMatchObject({ state: 'done', frames: cap.sent.length });
    firstRun = job.id;
    const midway = progress.filter((j) => j.state === 'running' && j.bytesRead > 0 && j.bytesRead < j.bytesTotal);
    expect(midway.length).toBeGreaterThan(0);
    expect(midway.every((j) => j.frames > 0 && j.bytesTotal === cap.file.length)).toBe(true);
    expect(await visibleFrames(w, url)).toBe(cap.sent.length);
  });

  it('keeps the previous result when a re-run is cancelled, and clears the cancelled rows', async () => {
    const started = (await w.analyst.post(`${url}/decode`)).body as DecodeJob;
    await waitForJob(w.viewer, url, (j) => j.frames > 0);
    const cancelled = await w.analyst.post(`${url}/job/cancel`);
    expect(cancelled.status).toBe(200);
    expect(cancelled.body).toMatchObject({ id: started.id, state: 'cancelled' });
    await w.app.jobs.idle();
    expect(rowsOfJob(w, started.id)).toBe(0);
    expect(await visibleFrames(w, url)).toBe(cap.sent.length);
    expect((await w.analyst.post(`${url}/job/cancel`)).status).toBe(409);
  });

  it('after a worker dies mid-run and the server restarts: interrupted, no partial frames, old result intact, re-run succeeds', async () => {
    const previous = { id: firstRun };
    const started = (await w.analyst.post(`${url}/decode`)).body as DecodeJob;
    await waitForJob(w.viewer, url, (j) => j.frames > 0 && j.bytesRead < j.bytesTotal);
    const capture = (await w.viewer.get(url)).body;
    await w.app.jobs.killForTest(capture.id);
    expect(rowsOfJob(w, started.id)).toBeGreaterThan(0);
    // while the server still runs the dead run's frames are not visible
    expect(await visibleFrames(w, url)).toBe(cap.sent.length);

    // restart: a new app on the same database and data folder recovers
    w.app.close();
    w.handle.close();
    const restarted = await reopenWorld(w);
    const job = (await restarted.viewer.get(`${url}/job`)).body as DecodeJob;
    expect(job).toMatchObject({ id: started.id, state: 'interrupted' });
    expect(job.error).toMatch(/server stopped/);
    expect(rowsOfJob(restarted, started.id)).toBe(0);
    expect(rowsOfJob(restarted, previous.id)).toBeGreaterThan(0);
    expect(await visibleFrames(restarted, url)).toBe(cap.sent.length);
    expect((await restarted.viewer.get(url)).body.status).toBe('interrupted');

    expect((await restarted.analyst.post(`${url}/decode`)).status).toBe(202);
    const rerun = await waitForJob(restarted.viewer, url);
    expect(rerun).toMatchObject({ state: 'done', frames: cap.sent.length });
    await restarted.app.jobs.idle();
    // the replaced run's rows are swept once the new run is visible
    expect(rowsOfJob(restarted, previous.id)).toBe(0);
    expect(await visibleFrames(restarted, url)).toBe(cap.sent.length);
    w = restarted;
  });
});

describe('input that is refused', () => {
  let w: World;
  beforeAll(async () => {
    w = await buildWorld(tempDataDir(), 64 * 1024);
  });
  afterAll(() => closeWorld(w));

  const stored = () => ({
    files: fs.readdirSync(path.join(w.env.dir, 'captures')).length + fs.readdirSync(path.join(w.env.dir, 'tmp')).length,
    rows: (w.handle.sqlite.prepare('select count(*) as n from captures').get() as { n: number }).n,
  });

  it('refuses a file that is no capture with 422 and the detector’s reason, keeping nothing', async () => {
    // bytes with every value equally likely: neither samples nor line bits
    const noise = Buffer.alloc(20_000);
    let x = 12345;
    for (let i = 0; i < noise.length; i++) noise[i] = (x = (Math.imul(x, 1103515245) + 12345) >>> 0) >>> 24;
    const res = await upload(w.analyst, w.rigId, noise, 'photo.jpg');
    expect(res.status).toBe(422);
    expect(res.body.error).toMatch(/^This file is not a capture Flagline can read: Binary data with \d+ distinct byte values/);
    const text = await upload(w.analyst, w.rigId, Buffer.from('Dear diary,\nthe network is down again.\n'), 'notes.txt');
    expect(text.status).toBe(422);
    expect(text.body.error).toMatch(/neither a value change dump/);
    expect(stored()).toEqual({ files: 0, rows: 0 });
  });

  it('refuses an upload by a viewer and one over the size limit, keeping nothing', async () => {
    const small = recoveredRaw(5).file;
    const byViewer = await upload(w.viewer, w.rigId, small, 'x.bin');
    expect(byViewer.status).toBe(403);
    const big = recoveredRaw(600).file;
    expect(big.length).toBeGreaterThan(64 * 1024);
    const tooBig = await upload(w.analyst, w.rigId, big, 'big.bin');
    expect(tooBig.status).toBe(413);
    expect(tooBig.body.error).toBe('The file is larger than the upload limit of 0 MB');
    const none = await w.analyst.agent.post(`/api/rigs/${w.rigId}/captures`).set('x-csrf-token', w.analyst.csrf).field('note', 'no file');
    expect(none.status).toBe(400);
    expect(none.body.fields).toEqual({ file: 'Attach the capture file in the multipart field "file"' });
    expect(stored()).toEqual({ files: 0, rows: 0 });
  });

  it('stores identical content once and refuses to decode before the roles are set', async () => {
    const file = recoveredRaw(5).file;
    const a = await upload(w.analyst, w.rigId, file, 'a.bin');
    const b = await upload(w.analyst, w.rigId, file, 'b.bin');
    expect(a.body.sha256).toBe(b.body.sha256);
    expect(stored()).toEqual({ files: 1, rows: 2 });
    const decode = await w.analyst.post(`/api/rigs/${w.rigId}/captures/${a.body.id}/decode`);
    expect(decode.status).toBe(422);
    expect(decode.body.error).toMatch(/Set the channel roles/);
    // deleting one keeps the file the other still uses
    expect((await w.owner.delete(`/api/rigs/${w.rigId}/captures/${a.body.id}`)).status).toBe(204);
    expect(stored()).toEqual({ files: 1, rows: 1 });
    expect((await w.owner.delete(`/api/rigs/${w.rigId}/captures/${b.body.id}`)).status).toBe(204);
    expect(stored()).toEqual({ files: 0, rows: 0 });
  });

  it('stores a decoder failure with its message and position', async () => {
    const file = recoveredRaw(5).file;
    const res = await upload(w.analyst, w.rigId, file, 'c.bin');
    const url = `/api/rigs/${w.rigId}/captures/${res.body.id}`;
    // read as a VCD the binary file has no header: the reader's fatal issue becomes the job error
    expect((await put(w.analyst, `${url}/settings`, { ...rawSettings, format: 'vcd', sampleRate: null, channelNames: [] })).status).toBe(422);
    expect((await put(w.analyst, `${url}/settings`, { ...rawSettings, links: [{ channel: 'tx' }], sampleRate: 8e6 })).status).toBe(200);
    w.handle.sqlite.prepare('update captures set settings = ? where id = ?').run(JSON.stringify({ ...rawSettings, clock: 'tx', links: [{ channel: 'nosuch', direction: 'unknown', stationAddress: null, label: '' }], handshake: [], rawWidth: 1, invert: false }), res.body.id);
    expect((await w.analyst.post(`${url}/decode`)).status).toBe(202);
    const job = await waitForJob(w.viewer, url);
    expect(job.state).toBe('failed');
    expect(job.error).toBe('The capture has no channel "nosuch" (given as data); its channels are tx, rx, 2, 3, 4, 5, 6, 7. (at byte 0)');
    expect((await w.viewer.get(`${url}/timeline/count`)).body.count).toBe(0);
  });
});

describe('the seek index of a value change dump', () => {
  let w: World;
  beforeAll(async () => {
    w = await buildWorld();
  });
  afterAll(() => closeWorld(w));

  it('draws a window deep in the file from the nearest seek point exactly as a read from the start does', async () => {
    const cap = clockedVcd(800);
    expect(cap.file.length).toBeGreaterThan(3 << 20);
    // points every 256 KB
    const res = await upload(w.analyst, w.rigId, cap.file, 'long.vcd');
    const url = `/api/rigs/${w.rigId}/captures/${res.body.id}`;
    const detection = (await w.analyst.get(`${url}/detection`)).body;
    expect((await put(w.analyst, `${url}/settings`, detection.suggested)).status).toBe(200);
    expect((await w.analyst.post(`${url}/decode`)).status).toBe(202);
    const job = await waitForJob(w.viewer, url);
    expect(job, job.error ?? '').toMatchObject({ state: 'done', frames: cap.sent.length });
    const points = w.handle.sqlite.prepare('select byte_offset as o, sample from seek_points where job_id = ? order by o').all(job.id) as { o: number; sample: number }[];
    expect(points.length).toBeGreaterThanOrEqual(3);
    // each point sits at the start of a "#time" token whose time is after the point's sample
    for (const p of points) {
      expect(cap.file[p.o]).toBe(0x23);
      expect(Number(cap.file.subarray(p.o + 1, cap.file.indexOf(0x0a, p.o)).toString())).toBeGreaterThan(p.sample);
    }
    const rows = (await w.viewer.get(`${url}/timeline?events=0&direction=backward&limit=5`)).body.rows;
    const late = rows[0];
    const seeked = (await w.viewer.get(`${url}/frames/${late.id}/waveform?bits=12`)).body;
    w.handle.sqlite.prepare('delete from seek_points where job_id = ?').run(job.id);
    const fromStart = (await w.viewer.get(`${url}/frames/${late.id}/waveform?bits=12`)).body;
    expect(seeked).toEqual(fromStart);
    expect(seeked.channels[1].changes.length).toBeGreaterThan(10);
  });
});
