import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { encodeLineBits, type FrameFaults, type LineItem, renderWaveform, type Glitch, vcdBytes } from '../../shared/decoder/encode';
import type { FaultDeskView, FaultFrameRow } from '../../shared/schemas';
import { buildWorld, closeWorld, put, upload, waitForJob, type World } from './captures-helpers';

// Timing of the rendered capture (encode/waveform.ts): bit cell k starts at LEAD + SPB*k and its
// clock's active edge, where bit recovery samples it, is half a cell later.
const SPB = 8;
const LEAD = 2 * SPB;
const PERIOD = 1e-7;
const edgeOf = (lineBit: number) => LEAD + SPB * lineBit + SPB / 2;
const STATION = 0x21;
/** I frame, modulo 8 (ISO/IEC 13239 control octet: bit 1 = 0, N(S) in bits 2-4; from memory) */
const iFrame = (ns: number, info: number[]) => new Uint8Array([STATION, (ns & 7) << 1, ...info]);
const zeros = (n: number) => new Array<number>(n).fill(0);
const mixed = (n: number, seed: number) => Array.from({ length: n }, (_, i) => (i * 37 + seed * 11 + 5) & 0xff);

type Name = 'flip' | 'twoFlips' | 'abort' | 'short' | 'residue' | 'dataGlitch' | 'missingEdge' | 'extraEdge' | 'clockStop' | 'harmlessGlitch';

/**
 * One link "a" from one station, every damage kind once, each damaged I frame sent again right
 * after with the same N(S) (go-back-N as HDLC does it, from memory), made with our encoder.
 */
function faultyCapture() {
  const items: LineItem[] = [{ kind: 'flags', count: 4 }];
  const at = {} as Record<Name, number>;
  let frames = 0;
  const send = (bytes: Uint8Array, faults?: FrameFaults, name?: Name) => {
    if (name) at[name] = frames;
    frames++;
    items.push({ kind: 'frame', bytes, faults }, { kind: 'flags', count: 2 });
  };
  const damaged = (name: Name, bytes: Uint8Array, faults?: FrameFaults) => {
    send(bytes, faults, name);
    send(bytes);
  };
  send(iFrame(0, mixed(6, 1)));
  damaged('flip', iFrame(1, [0xff, 0xff, 0x12, 0x34, 0x56]), { flipBits: [36] });
  damaged('twoFlips', iFrame(2, mixed(12, 2)), { flipBits: [20, 70] });
  damaged('abort', iFrame(3, mixed(8, 3)), { abortAfterBits: 40 });
  damaged('short', iFrame(4, []), { noFcs: true });
  damaged('residue', iFrame(5, mixed(6, 5)), { residueBits: 3 });
  damaged('dataGlitch', iFrame(6, zeros(6)));
  damaged('missingEdge', iFrame(7, zeros(6)));
  damaged('extraEdge', iFrame(0, zeros(6)));
  damaged('clockStop', iFrame(1, zeros(8)));
  send(iFrame(2, zeros(6)), undefined, 'harmlessGlitch');
  items.push({ kind: 'flags', count: 4 });
  const enc = encodeLineBits(items);
  const s = (name: Name) => enc.frames[at[name]].startBit;
  const idleGlitchBit = enc.frames[enc.frames.length - 1].endBit + 20;
  const glitches: Glitch[] = [
    // covers the sampling edge of line bit 27 (a 0 among 0s): one bit flipped on the line
    { channel: 'a', sample: edgeOf(s('dataGlitch') + 27) - 1, width: 3 },
    // an extra active clock edge two samples after a real one
    { channel: 'clk', sample: edgeOf(s('extraEdge') + 30) + 1, width: 1 },
    // between two sampling edges: on the line, but no bit changes
    { channel: 'a', sample: LEAD + SPB * (s('harmlessGlitch') + 20) + 1, width: 2 },
    // on the idle line after the last frame
    { channel: 'a', sample: LEAD + SPB * idleGlitchBit + 1, width: 2 },
  ];
  const missingClockEdges = [s('missingEdge') + 30];
  for (let k = 20; k < 40; k++) missingClockEdges.push(s('clockStop') + k);
  const w = renderWaveform({
    links: [{ name: 'a', bits: enc.bits }],
    samplesPerBit: SPB,
    samplePeriodSeconds: PERIOD,
    encoding: 'nrz',
    clock: { name: 'clk', edge: 'rising' },
    faults: { glitches, missingClockEdges },
  });
  return { file: Buffer.from(vcdBytes(w)), at, frames, startBit: (name: Name) => s(name) };
}

describe('fault desk API over a capture with every damage kind', () => {
  let w: World;
  let url = '';
  let desk: FaultDeskView;
  const cap = faultyCapture();
  const at = cap.at;
  const row = (name: Name): FaultFrameRow => desk.rows.find((r) => r.seq === at[name])!;

  beforeAll(async () => {
    w = await buildWorld();
    const res = await upload(w.analyst, w.rigId, cap.file, 'faulty.vcd');
    expect(res.status).toBe(201);
    url = `/api/rigs/${w.rigId}/captures/${res.body.id}`;
    const settings = { format: 'vcd', clock: 'clk', links: [{ channel: 'a' }], encoding: 'nrz', edge: 'rising' };
    expect((await put(w.analyst, `${url}/settings`, settings)).status).toBe(200);
    expect((await w.analyst.post(`${url}/decode`)).status).toBe(202);
    expect(await waitForJob(w.viewer, url)).toMatchObject({ state: 'done', frames: cap.frames });
    const got = await w.viewer.get(`${url}/faults`);
    expect(got.status).toBe(200);
    desk = got.body;
    // a decode in a worker thread: slow to start on a busy machine
  }, 60_000);
  afterAll(() => closeWorld(w));

  it('groups every damaged frame by its cause', () => {
    expect(desk.available).toBe(true);
    const count = Object.fromEntries(desk.groups.map((g) => [g.cause, g.count]));
    expect(count).toEqual({
      'bad-fcs-explained': 2,
      'bad-fcs-unexplained': 1,
      // ISO/IEC 13239: seven or more 1s in a row inside a frame abort it
      abort: 1,
      short: 1,
      // a lost bit (missing clock edge, stopped clock) or a doubled one (extra edge) leaves a bit count that is no multiple of 8
      residue: 4,
      'line-anomaly': 1,
      // no timing race in this capture: one lone abort is not an under-run, the clock only loses edges
      'tx-underrun': 0,
      'underrun-fragment': 0,
      'rx-overrun': 0,
      'octet-timing': 0,
    });
    const causeOf = (name: Name) => row(name).cause;
    expect(causeOf('flip')).toBe('bad-fcs-explained');
    expect(causeOf('dataGlitch')).toBe('bad-fcs-explained');
    expect(causeOf('twoFlips')).toBe('bad-fcs-unexplained');
    expect(causeOf('abort')).toBe('abort');
    expect(causeOf('short')).toBe('short');
    for (const n of ['residue', 'missingEdge', 'extraEdge', 'clockStop'] as const) expect(causeOf(n), n).toBe('residue');
    expect(causeOf('harmlessGlitch')).toBe('line-anomaly');
    expect(desk.total).toBe(10);
  });

  it('reports a bad FCS with the flipped bit, its place on the line and a readable diagnosis', () => {
    const r = row('flip');
    // the CRC syndrome names one flipped bit in frames shorter than 32 767 bits for FCS-16 (textbook CRC property, from memory)
    expect(r.flippedBit).toBe(36);
    // ISO/IEC 13239 zero-bit insertion: 0xFF 0xFF after address and control put three 0s before bit 36
    expect(r.suspectLineBit).toBe(39);
    expect(Math.abs(r.focusSample! - edgeOf(cap.startBit('flip') + 39))).toBeLessThanOrEqual(1);
    expect(r.diagnosis).toMatch(/one flipped bit explains it — bit 36 .*line bit 39 after 3 stuffed zeros/);
    expect(r.fcsReceived).not.toBe(r.fcsComputed);
    expect(r.station).toBe(STATION);
    expect(r.stationName).toBe('Desk A');
    expect(row('twoFlips').diagnosis).toMatch(/no single flipped bit explains it/);
  });

  it('links each row to its frame and to the retransmission found by N(S)', async () => {
    for (const name of ['flip', 'twoFlips', 'abort', 'short', 'residue', 'dataGlitch', 'missingEdge', 'extraEdge', 'clockStop'] as const) {
      const r = row(name);
      expect(r.frameId, name).not.toBeNull();
      expect(r.retransmissionSearch, name).toBe('found');
      expect(r.retransmissionBy, name).toBe('ns');
      expect(r.nextFrameId, name).toBe(r.retransmissionFrameId);
      const frame = (await w.viewer.get(`${url}/frames/${r.frameId}`)).body.frame;
      expect(frame).toMatchObject({ link: 'a', seq: at[name] });
      const again = (await w.viewer.get(`${url}/frames/${r.retransmissionFrameId}`)).body.frame;
      expect(again).toMatchObject({ link: 'a', seq: at[name] + 1, status: 'ok' });
    }
  });

  it('carries the line anomalies inside frames and outside them', () => {
    expect(row('dataGlitch').anomalies.map((a) => a.kind)).toEqual(['glitch']);
    expect(row('missingEdge').anomalies.map((a) => a.kind)).toEqual(['clock-missing']);
    expect(row('extraEdge').anomalies.map((a) => a.kind)).toEqual(['clock-extra']);
    expect(row('clockStop').anomalies.map((a) => a.kind)).toEqual(['silence']);
    expect(row('clockStop').diagnosis).toMatch(/clk silent for 21 bit times/);
    expect(desk.outsideTotal).toBe(1);
    expect(desk.outside[0]).toMatchObject({ kind: 'glitch', link: 'a' });
    expect(desk.anomalyGroups.find((g) => g.kind === 'glitch')).toMatchObject({ inFrames: 2, outside: 1 });
  });

  it('counts damage over time in bins that add up to the rows', () => {
    expect(desk.bins!.frames.reduce((a, b) => a + b, 0)).toBe(10);
    expect(desk.bins!.byCause.residue.reduce((a, b) => a + b, 0)).toBe(4);
    expect(desk.bins!.start[1]).toBeCloseTo(desk.bins!.binSeconds, 12);
  });

  it('filters rows by cause and pages them', async () => {
    const residue = (await w.viewer.get(`${url}/faults?cause=residue&limit=2`)).body as FaultDeskView;
    expect(residue.total).toBe(4);
    expect(residue.rows.map((r) => r.seq)).toEqual([at.residue, at.missingEdge]);
    const next = (await w.viewer.get(`${url}/faults?cause=residue&limit=2&offset=2`)).body as FaultDeskView;
    expect(next.rows.map((r) => r.seq)).toEqual([at.extraEdge, at.clockStop]);
    // the groups stay the whole run's
    expect(residue.groups.reduce((n, g) => n + g.count, 0)).toBe(10);
  });

  it('refuses an unknown cause with a message naming the choices', async () => {
    const res = await w.viewer.get(`${url}/faults?cause=gremlins`);
    expect(res.status).toBe(400);
    expect(res.body.fields.cause).toMatch(/bad-fcs-explained/);
  });

  it('shows the same desk after decoding again, and drops the fault rows of runs that were replaced', async () => {
    const first = (await w.viewer.get(`${url}/job`)).body.id as number;
    const faultRowsOf = (jobId: number) => (w.handle.sqlite.prepare('select count(*) as n from fault_rows where job_id = ?').get(jobId) as { n: number }).n;
    expect(faultRowsOf(first)).toBe(10);
    for (let run = 0; run < 2; run++) {
      expect((await w.analyst.post(`${url}/decode`)).status).toBe(202);
      expect(await waitForJob(w.viewer, url)).toMatchObject({ state: 'done' });
      await w.app.jobs.idle();
    }
    expect(faultRowsOf(first)).toBe(0);
    const again = (await w.viewer.get(`${url}/faults`)).body as FaultDeskView;
    expect(again.groups).toEqual(desk.groups);
    expect(again.rows.map((r) => [r.seq, r.cause, r.diagnosis])).toEqual(desk.rows.map((r) => [r.seq, r.cause, r.diagnosis]));
  });

  it('answers an empty desk for a capture not decoded yet, and 404 for an unknown capture', async () => {
    const res = await upload(w.analyst, w.rigId, cap.file, 'not-yet.vcd');
    const empty = (await w.viewer.get(`/api/rigs/${w.rigId}/captures/${res.body.id}/faults`)).body as FaultDeskView;
    expect(empty).toMatchObject({ available: false, total: 0, rows: [] });
    expect((await w.viewer.get(`/api/rigs/${w.rigId}/captures/999999/faults`)).status).toBe(404);
  });
});
