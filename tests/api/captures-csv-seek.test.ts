import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { encodeLineBits } from '../../shared/decoder/encode';
import { renderWaveform } from '../../shared/decoder/encode';
import { csvChunks, type CsvWriterOptions } from '../../shared/decoder/encode';
import { SEEK_SPACING } from '../../server/runs/seek/vcd-seek';
import { buildWorld, closeWorld, linkTraffic, put, upload, waitForJob, type World } from './captures-helpers';

/** A clocked capture ("clk", "tx", "rx") written as a CSV sample table of several megabytes. */
function clockedCsv(framesPerLink: number, opts: CsvWriterOptions): Buffer {
  const a = linkTraffic('tx', 0x21, framesPerLink);
  const b = linkTraffic('rx', 0x10, framesPerLink, 5000);
  const w = renderWaveform({
    links: [
      { name: 'tx', bits: encodeLineBits(a.items).bits },
      { name: 'rx', bits: encodeLineBits(b.items).bits },
    ],
    samplesPerBit: 6,
    samplePeriodSeconds: 1e-7,
    encoding: 'nrz',
    clock: { name: 'clk', edge: 'rising' },
  });
  return Buffer.concat(Array.from(csvChunks(w, opts), (c) => Buffer.from(c)));
}

const variants: { name: string; frames: number; opts: CsvWriterOptions; sampleRate: number | null }[] = [
  { name: 'time in seconds, one row per change', frames: 500, opts: { time: 'seconds', rows: 'changes' }, sampleRate: null },
  { name: 'time in seconds, one row per sample', frames: 150, opts: { time: 'seconds', rows: 'every' }, sampleRate: null },
  { name: 'time in seconds with the sample rate given, one row per change', frames: 500, opts: { time: 'seconds', rows: 'changes' }, sampleRate: 1e7 },
  { name: 'sample numbers, one row per change', frames: 600, opts: { time: 'sample', rows: 'changes' }, sampleRate: 1e7 },
  { name: 'sample numbers, one row per sample', frames: 200, opts: { time: 'sample', rows: 'every' }, sampleRate: 1e7 },
];

describe('the CSV seek index', () => {
  let w: World;
  beforeAll(async () => {
    w = await buildWorld();
  });
  afterAll(() => closeWorld(w));

  for (const v of variants) {
    it(`gives the same waveform windows as reading from the start (${v.name})`, async () => {
      const file = clockedCsv(v.frames, v.opts);
      expect(file.length).toBeGreaterThan(2 << 20);
      const res = await upload(w.analyst, w.rigId, file, 'port1.csv');
      expect(res.status, JSON.stringify(res.body)).toBe(201);
      const url = `/api/rigs/${w.rigId}/captures/${res.body.id}`;
      const settings = { format: 'csv', sampleRate: v.sampleRate, clock: 'clk', links: [{ channel: 'tx' }, { channel: 'rx' }], encoding: 'nrz', edge: 'rising' };
      expect((await put(w.analyst, `${url}/settings`, settings)).status).toBe(200);
      expect((await w.analyst.post(`${url}/decode`)).status).toBe(202);
      const job = await waitForJob(w.viewer, url);
      expect(job.state).toBe('done');
      expect(job.frames).toBe(2 * v.frames);
      const jobId = (w.handle.sqlite.prepare('select current_job_id as id from captures where id = ?').get(res.body.id) as { id: number }).id;
      const points = w.handle.sqlite.prepare('select byte_offset as byteOffset, sample from seek_points where job_id = ? order by byte_offset').all(jobId) as { byteOffset: number; sample: number }[];
      expect(points.length).toBeGreaterThan(Math.floor(file.length / SEEK_SPACING) - 2);
      // every point sits at a row start, and its sample is that row's own sample
      for (const p of points.slice(0, 5)) {
        expect(file[p.byteOffset - 1]).toBe(10);
        const cell = file.subarray(p.byteOffset, file.indexOf(10, p.byteOffset)).toString('latin1').split(',')[0];
        const sample = v.opts.time === 'sample' ? Number(cell) : Math.round(Number(cell) * 1e7);
        expect(p.sample).toBe(sample);
      }
      const frames = w.handle.sqlite.prepare('select id from frames where job_id = ? order by first_sample').all(jobId) as { id: number }[];
      const picks = [frames[0], frames[Math.floor(frames.length / 3)], frames[Math.floor(frames.length / 2)], frames.at(-3)!, frames.at(-1)!];
      const viaIndex = [];
      for (const f of picks) {
        const r = await w.viewer.get(`${url}/frames/${f.id}/waveform?bits=12`);
        expect(r.status).toBe(200);
        viaIndex.push(r.body);
      }
      w.handle.sqlite.prepare('delete from seek_points where job_id = ?').run(jobId);
      for (const [k, f] of picks.entries()) {
        const fromStart = (await w.viewer.get(`${url}/frames/${f.id}/waveform?bits=12`)).body;
        expect(viaIndex[k]).toEqual(fromStart);
        // a real window: the clock toggles inside it
        expect(fromStart.channels[0].changes.length).toBeGreaterThan(10);
      }
    }, 120_000);
  }

  it('keeps no seek points for a table without a time column, whose rows count from the start', async () => {
    const file = clockedCsv(250, { time: 'none', rows: 'every' });
    const res = await upload(w.analyst, w.rigId, file, 'rows.csv');
    expect(res.status, JSON.stringify(res.body)).toBe(201);
    const url = `/api/rigs/${w.rigId}/captures/${res.body.id}`;
    const settings = { format: 'csv', sampleRate: 1e7, clock: 'clk', links: [{ channel: 'tx' }, { channel: 'rx' }], encoding: 'nrz', edge: 'rising' };
    expect((await put(w.analyst, `${url}/settings`, settings)).status).toBe(200);
    expect((await w.analyst.post(`${url}/decode`)).status).toBe(202);
    expect((await waitForJob(w.viewer, url)).frames).toBe(500);
    expect(file.length).toBeGreaterThan(4 * SEEK_SPACING);
    const jobId = (w.handle.sqlite.prepare('select current_job_id as id from captures where id = ?').get(res.body.id) as { id: number }).id;
    expect(w.handle.sqlite.prepare('select count(*) as n from seek_points where job_id = ?').get(jobId)).toEqual({ n: 0 });
    const last = w.handle.sqlite.prepare('select id from frames where job_id = ? order by first_sample desc limit 1').get(jobId) as { id: number };
    const win = (await w.viewer.get(`${url}/frames/${last.id}/waveform?bits=12`)).body;
    expect(win.channels[0].changes.length).toBeGreaterThan(10);
  }, 120_000);
});
