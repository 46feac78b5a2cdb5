// The field-map editor's preview frames: one answer with the rig's decoded captures, the first
// I frames of one with every octet (past the timeline's 64), a frame asked for by id, and a reason
// in words when there is nothing to preview.
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { encodeLineBits, renderWaveform, vcdChunks, type LineItem } from '../../shared/decoder/encode';
import type { CaptureSummaryRow, FrameDetail, PreviewFrames, TimelinePage } from '../../shared/schemas';
import { buildWorld, closeWorld, put, upload, waitForJob, type World } from './captures-helpers';

const STATION = 0x21;
const iControl = (ns: number, nr: number) => ((ns & 7) << 1) | ((nr & 7) << 5);
const ascii = (s: string) => Array.from(s, (c) => c.charCodeAt(0));

/** A clocked VCD of one link "tx" carrying these frames (each as address, control, information), a bad FCS where asked. */
function vcdOf(frames: { bytes: number[]; flip?: boolean }[]): Buffer {
  const items: LineItem[] = [{ kind: 'flags', count: 3 }];
  for (const f of frames) {
    items.push({ kind: 'frame', bytes: Uint8Array.from(f.bytes), faults: f.flip ? { flipBits: [8 * 2 + 3] } : undefined });
    items.push({ kind: 'flags', count: 2 });
  }
  const w = renderWaveform({ links: [{ name: 'tx', bits: encodeLineBits(items).bits }], samplesPerBit: 6, samplePeriodSeconds: 1e-7, encoding: 'nrz', clock: { name: 'clk', edge: 'rising' } });
  return Buffer.concat(Array.from(vcdChunks(w, { timescale: '1 ns' }), (c) => Buffer.from(c)));
}

// 100 octets of information: more than a timeline row's 64 octets of hex
const long = [STATION, iControl(0, 0), ...Array.from({ length: 100 }, (_, i) => (i * 7 + 1) & 0xff)];
const withCalls = [
  { bytes: [STATION, 0x01] }, // RR: no information field
  { bytes: long },
  { bytes: [STATION, iControl(1, 0), 0x0f, ...ascii('FILE0001.DAT')], flip: true },
  { bytes: [STATION, iControl(2, 0), 0x0f, ...ascii('FILE0002.DAT')] },
  { bytes: [STATION, 0x03, ...ascii('UI NOTE')] }, // UI: information, but not an I frame
  { bytes: [STATION, iControl(3, 0), 0x0f, ...ascii('FILE0003.DAT')] },
  { bytes: [STATION, iControl(4, 0), 0x0f, ...ascii('FILE0004.DAT')] },
];
const noCalls = [{ bytes: [STATION, 0x01] }, { bytes: [STATION, 0x03, ...ascii('UI ONLY')] }, { bytes: [STATION, 0x21] }];

let w: World;
let base = '';

async function uploadAndDecode(file: Buffer, name: string, decode = true): Promise<number> {
  const up = await upload(w.analyst, w.rigId, file, name);
  expect(up.status, JSON.stringify(up.body)).toBe(201);
  const id = (up.body as CaptureSummaryRow).id;
  if (!decode) return id;
  const url = `/api/rigs/${w.rigId}/captures/${id}`;
  const detection = (await w.analyst.get(`${url}/detection`)).body;
  const saved = await put(w.analyst, `${url}/settings`, { ...detection.suggested, links: [{ channel: 'tx', direction: 'to-server', stationAddress: STATION }] });
  expect(saved.status, JSON.stringify(saved.body)).toBe(200);
  expect((await w.analyst.post(`${url}/decode`)).status).toBe(202);
  expect(await waitForJob(w.viewer, url)).toMatchObject({ state: 'done' });
  return id;
}

const preview = async (query = '') => {
  const res = await w.viewer.get(`${base}${query}`);
  expect(res.status, JSON.stringify(res.body)).toBe(200);
  return res.body as PreviewFrames;
};

beforeAll(async () => {
  w = await buildWorld();
  base = `/api/rigs/${w.rigId}/field-maps/preview-frames`;
}, 120_000);

afterAll(async () => {
  await closeWorld(w);
});

describe('field-map preview frames', () => {
  let callsId = 0;
  let quietId = 0;

  it('says why there is nothing to preview on a rig without a decoded capture, and what to do', async () => {
    const got = await preview();
    expect(got).toMatchObject({ captures: [], captureId: null, frames: [], frame: null, empty: { reason: 'no-capture' } });
    expect(got.empty!.message).toMatch(/No capture on this rig has decoded frames yet.*Upload a capture and decode it/);
  });

  it("sends the first good I frames with an information field, every octet of each, as the inspector reads them", async () => {
    callsId = await uploadAndDecode(vcdOf(withCalls), 'calls.vcd');
    const got = await preview();
    expect(got.captureId).toBe(callsId);
    expect(got.captures).toEqual([{ id: callsId, name: 'calls.vcd' }]);
    expect(got.empty).toBeNull();
    expect(got.frame).toBeNull();
    // the RR, the bad-FCS I frame and the UI frame are left out; time order
    expect(got.frames.map((f) => f.seq)).toEqual([1, 3, 5, 6]);
    const hex = (bytes: number[]) => Buffer.from(bytes).toString('hex');
    for (const [i, f] of got.frames.entries()) {
      const sent = withCalls[f.seq].bytes;
      expect(f).toMatchObject({ link: 'tx', status: 'ok', kind: 'I', address: STATION, infoLength: sent.length - 2, infoOffset: 2 });
      // address..information as sent, then the two FCS octets
      expect(f.octets.length).toBe(2 * (sent.length + 2));
      expect(f.octets.startsWith(hex(sent))).toBe(true);
      const inspector = (await w.viewer.get(`/api/rigs/${w.rigId}/captures/${callsId}/frames/${f.id}`)).body as FrameDetail;
      expect([i, f.octets]).toEqual([i, inspector.frame.hexAll]);
      expect(f.summary).toBe(inspector.frame.summary);
    }
    // the long frame whole, where a timeline row stops at 64 octets
    expect(got.frames[0].octets.length).toBe(2 * (long.length + 2));
    const timeline = (await w.viewer.get(`/api/rigs/${w.rigId}/captures/${callsId}/timeline?kind=I&status=ok&limit=5&events=0`)).body as TimelinePage;
    expect(timeline.rows[0]).toMatchObject({ id: got.frames[0].id, hex: hex(long).slice(0, 128) });
  });

  it('sends a frame asked for by id whole beside the list, whatever its kind', async () => {
    const list = (await w.viewer.get(`/api/rigs/${w.rigId}/captures/${callsId}/timeline?limit=10&events=0`)).body as TimelinePage;
    const rr = list.rows.find((r) => r.type === 'frame' && r.seq === 0)!;
    const got = await preview(`?capture=${callsId}&frame=${rr.id}`);
    expect(got.frame).toMatchObject({ id: rr.id, seq: 0, kind: 'S', infoLength: 0, infoOffset: 2, octets: expect.stringMatching(/^2101[0-9a-f]{4}$/) });
    expect(got.frames).toHaveLength(4);
    expect((await preview(`?limit=2`)).frames.map((f) => f.seq)).toEqual([1, 3]);
  });

  it('says so when the capture has no I frame with an information field, and when it is not decoded', async () => {
    quietId = await uploadAndDecode(vcdOf(noCalls), 'quiet.vcd');
    const quiet = await preview();
    // the newest decoded capture by default
    expect(quiet.captureId).toBe(quietId);
    expect(quiet.captures.map((c) => c.name)).toEqual(['quiet.vcd', 'calls.vcd']);
    expect(quiet).toMatchObject({ frames: [], empty: { reason: 'no-i-frame' } });
    expect(quiet.empty!.message).toBe(
      'quiet.vcd has no I frame with an information field and a good FCS: there is no call to preview. Choose another capture, or type the id of a frame from its timeline.',
    );
    const pendingId = await uploadAndDecode(vcdOf(withCalls), 'pending.vcd', false);
    const pending = await preview(`?capture=${pendingId}`);
    expect(pending).toMatchObject({ captureId: pendingId, frames: [], empty: { reason: 'not-decoded' } });
    expect(pending.empty!.message).toMatch(/^pending\.vcd has no decoded frames yet/);
    // a capture without decoded frames is not offered
    expect(pending.captures.map((c) => c.id)).toEqual([quietId, callsId]);
  });

  it('refuses malformed queries with a message per parameter', async () => {
    const bad = async (query: string) => {
      const res = await w.viewer.get(`${base}${query}`);
      expect(res.status, query).toBe(400);
      return res.body as { error: string; fields: Record<string, string> };
    };
    expect((await bad('?capture=abc')).fields).toEqual({ capture: 'Give the capture as its id, a whole number' });
    expect((await bad('?capture=0')).fields).toEqual({ capture: 'A capture id is 1 or more' });
    expect((await bad(`?capture=${callsId}&frame=1.5`)).fields).toEqual({ frame: 'Give the frame as its id, a whole number' });
    expect((await bad('?limit=0')).fields).toEqual({ limit: 'Ask for at least 1 frame' });
    expect((await bad('?limit=500')).fields).toEqual({ limit: 'Ask for at most 100 frames' });
    expect((await bad('?limit=many')).error).toBe('Some fields need attention');
  });

  it('answers 404 naming what is missing for a capture or frame that is not there', async () => {
    const noCapture = await w.viewer.get(`${base}?capture=987654`);
    expect([noCapture.status, noCapture.body.error]).toEqual([404, 'No capture with id 987654 on this rig']);
    // a frame of another capture is not one of this capture's frames
    const other = (await preview(`?capture=${callsId}`)).frames[0].id;
    const elsewhere = await w.viewer.get(`${base}?capture=${quietId}&frame=${other}`);
    expect([elsewhere.status, elsewhere.body.error]).toEqual([404, `No frame with id ${other} in this capture's decoded frames`]);
  });
});
