import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import type { FrameDetail, TimelineFrame, TimelinePage, WaveformWindow } from '../../shared/schemas';
import { buildWorld, clockedVcd, closeWorld, put, upload, waitForJob, type World } from './captures-helpers';

/** the level of a channel at sample x: the last change at or before it */
function levelAt(changes: [number, number][], x: number): number {
  let level = changes[0][1];
  for (const [s, v] of changes) {
    if (s > x) break;
    level = v;
  }
  return level;
}

// The encoder writes the same capture (6 samples of 100 ns per bit) with a fine and with a coarse
// VCD time unit: a 1 ps unit puts 600 000 time steps in one bit, the 100 ns unit six.
describe.each([
  { name: 'a 1 ps time unit', timescale: '1 ps', period: 1e-12 },
  { name: 'a coarse time unit (100 ns, one step per sample)', timescale: '100 ns', period: 1e-7 },
])('the waveform window of a VCD with $name', ({ timescale, period }) => {
  let w: World;
  let url = '';
  let frame: FrameDetail['frame'];
  beforeAll(async () => {
    w = await buildWorld();
    const res = await upload(w.analyst, w.rigId, clockedVcd(16, { timescale }).file, `timescale-${timescale.replace(' ', '')}.vcd`);
    expect(res.status, JSON.stringify(res.body)).toBe(201);
    url = `/api/rigs/${w.rigId}/captures/${res.body.id}`;
    const settings = { format: 'vcd', clock: 'clk', links: [{ channel: 'tx' }, { channel: 'rx' }], handshake: [{ channel: 'rts', name: 'RTS' }], encoding: 'nrz', edge: 'rising' };
    expect((await put(w.analyst, `${url}/settings`, settings)).status).toBe(200);
    expect((await w.analyst.post(`${url}/decode`)).status).toBe(202);
    expect((await waitForJob(w.viewer, url)).state).toBe('done');
    const rows = ((await w.viewer.get(`${url}/timeline?events=0&limit=100`)).body as TimelinePage).rows as TimelineFrame[];
    // an I frame in the middle of the station's line, with flags and frames either side
    const pick = rows.filter((f) => f.link === 'tx' && f.kind === 'I' && f.status === 'ok')[4];
    frame = ((await w.viewer.get(`${url}/frames/${pick.id}`)).body as FrameDetail).frame;
  }, 120_000);
  afterAll(() => closeWorld(w));

  it('spans the whole frame and the context bits either side, measured in line bits', async () => {
    const res = await w.viewer.get(`${url}/frames/${frame.id}/waveform?bits=16`);
    expect(res.status, JSON.stringify(res.body)).toBe(200);
    const win = res.body as WaveformWindow;
    expect(win.samplePeriodSeconds).toBeCloseTo(period, 15);
    // 6 samples of 100 ns per bit, whatever the unit
    expect(win.samplesPerBit * win.samplePeriodSeconds).toBeCloseTo(6e-7, 9);
    const spb = win.samplesPerBit;
    expect(win.fromSample).toBeLessThanOrEqual(frame.firstSample - 15.5 * spb);
    expect(win.fromSample).toBeGreaterThanOrEqual(frame.firstSample - 16.5 * spb);
    expect(win.toSample).toBeGreaterThanOrEqual(frame.lastSample + 15.5 * spb);
    expect(win.toSample).toBeLessThanOrEqual(frame.lastSample + 16.5 * spb);
    // the clock ticks through the whole frame: one rising edge per line bit between its first and last bit
    const clk = win.channels.find((c) => c.role === 'clock')!;
    expect(clk.thinned).toBe(false);
    const rising = clk.changes.filter(([s, v]) => v === 1 && s >= frame.firstSample - spb && s <= frame.lastSample + spb).length;
    expect(rising).toBeGreaterThanOrEqual(frame.bitLength + frame.stuffed.length);
    // the station's data line carries the frame, and the flags around it
    const tx = win.channels.find((c) => c.name === 'tx')!;
    expect(tx.changes.filter(([s]) => s < frame.firstSample).length).toBeGreaterThan(2);
    expect(tx.changes.filter(([s]) => s > frame.firstSample && s < frame.lastSample).length).toBeGreaterThan(frame.bitLength / 8);
  });

  it('thins each channel to at most three changes per drawing column and keeps every column’s closing level', async () => {
    const full = (await w.viewer.get(`${url}/frames/${frame.id}/waveform?bits=16&points=20000`)).body as WaveformWindow;
    const points = 16;
    const thin = (await w.viewer.get(`${url}/frames/${frame.id}/waveform?bits=16&points=${points}`)).body as WaveformWindow;
    expect([thin.fromSample, thin.toSample]).toEqual([full.fromSample, full.toSample]);
    const width = (full.toSample - full.fromSample + 1) / points;
    for (const [i, ch] of thin.channels.entries()) {
      const original = full.channels[i].changes;
      expect(ch.changes[0]).toEqual(original[0]);
      if (original.length <= 3 * points + 1) {
        expect(ch.changes).toEqual(original);
        continue;
      }
      expect(ch.thinned).toBe(true);
      expect(ch.changes.length).toBeLessThanOrEqual(3 * points + 1);
      for (let k = 0; k < points; k++) {
        const end = full.fromSample + Math.ceil((k + 1) * width) - 1;
        expect(levelAt(ch.changes, end), `${ch.name}, column ${k}`).toBe(levelAt(original, end));
      }
      // a busy column still draws low and high
      expect(new Set(ch.changes.slice(1).map(([, v]) => v))).toEqual(new Set([0, 1]));
    }
  });

  it('refuses a drawing width the schema does not allow', async () => {
    const res = await w.viewer.get(`${url}/frames/${frame.id}/waveform?points=3`);
    expect(res.status).toBe(400);
    expect(res.body.fields.points).toBeTruthy();
  });
});
