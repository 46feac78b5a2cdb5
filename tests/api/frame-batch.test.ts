// The hand-over between the decoder thread and the writer (server/runs/frame-batch.ts): whatever
// the decoder lets out must come back out of a batch field for field, in the same order, with
// the sample period each record was given under, however the records are cut into batches.
import { describe, expect, it } from 'vitest';
import { createDecoder, type DecodedFrame, type LineEvent } from '../../shared/decoder';
import { BatchPacker, type FrameBatch, unpackBatch } from '../../server/runs/frame-batch';
import { clockedVcd, recoveredRaw } from './captures-helpers';

type Item = { period: number } & ({ frame: DecodedFrame } | { event: LineEvent });

/** a transfer copies nothing: the batch's buffers must stand alone (a clone is what arrives) */
const transferred = (b: FrameBatch): FrameBatch => structuredClone(b, { transfer: [b.nums, b.octets] });

/** Packs the items, cutting a batch before each index in `cuts`, and replays every batch. */
function roundTrip(items: Item[], cuts: Set<number>, initialSlots?: number): Item[] {
  const packer = new BatchPacker(initialSlots);
  const batches: FrameBatch[] = [];
  items.forEach((item, i) => {
    if (cuts.has(i)) batches.push(transferred(packer.take(i)));
    packer.setPeriod(item.period);
    if ('frame' in item) packer.frame(item.frame);
    else packer.event(item.event);
  });
  batches.push(transferred(packer.take(items.length)));
  const out: Item[] = [];
  const strings: string[] = [];
  let period = NaN;
  for (const b of batches) {
    unpackBatch(b, strings, {
      period: (p) => (period = p),
      // the octets are a view into the batch: copied here so the comparison sees plain arrays
      frame: (f) => out.push({ period, frame: { ...f, bytes: Uint8Array.from(f.bytes) } }),
      event: (e) => out.push({ period, event: e }),
    });
  }
  expect(batches.reduce((n, b) => n + b.frames + b.events, 0)).toBe(items.length);
  return out;
}

function decoded(file: Uint8Array, options: Parameters<typeof createDecoder>[0], chunk: number): Item[] {
  const items: Item[] = [];
  const decoder = createDecoder(options, {
    frame: (frame) => items.push({ period: decoder.samplePeriodSeconds!, frame }),
    event: (event) => items.push({ period: decoder.samplePeriodSeconds!, event }),
  });
  for (let i = 0; i < file.length; i += chunk) decoder.push(file.subarray(i, i + chunk));
  decoder.finish();
  return items;
}

/** a reproducible pseudo-random sequence (a linear congruential generator, common practice) */
function random(seed: number): () => number {
  let x = seed;
  return () => (x = (Math.imul(x, 1103515245) + 12345) >>> 0) / 2 ** 32;
}

describe('frame batches between the decoder thread and the writer', () => {
  it("gives back a raw capture's frames and events exactly, cut anywhere", () => {
    const cap = recoveredRaw(40);
    const items = decoded(cap.file, { format: 'raw', sampleRate: 8e6, channelNames: ['tx', 'rx'], data: ['tx', 'rx'], encoding: 'nrzi', edge: 'rising', bitRate: 1e6 }, 4096);
    expect(items.filter((i) => 'frame' in i)).toHaveLength(cap.sent.length);
    const next = random(7);
    for (let round = 0; round < 5; round++) {
      const cuts = new Set(Array.from({ length: 1 + round * 3 }, () => Math.floor(next() * items.length)));
      expect(roundTrip(items, cuts)).toEqual(items);
    }
  });

  it('gives back a clocked value change dump with its handshake rises and fill events', () => {
    const cap = clockedVcd(30);
    const items = decoded(cap.file, { format: 'vcd', clock: 'clk', data: ['tx', 'rx'], handshake: ['rts'], encoding: 'nrz', edge: 'rising' }, 1000);
    expect(items.some((i) => 'event' in i && i.event.kind === 'rise')).toBe(true);
    expect(roundTrip(items, new Set([1, 2, Math.floor(items.length / 2)]))).toEqual(items);
  });

  it('keeps nulls, missing event fields, a changed period and frames without a link decode, growing past its first buffers', () => {
    const bare: DecodedFrame = {
      link: 'a b',
      seq: 0,
      firstSample: 2 ** 40 + 0.5,
      lastSample: 2 ** 40 + 17.25,
      bytes: Uint8Array.of(0xff),
      bitLength: 9,
      stuffed: [],
      status: 'short',
      fcsReceived: null,
      fcsComputed: null,
      flippedBit: null,
      decode: null,
    };
    const full: DecodedFrame = {
      ...bare,
      link: 'línea',
      seq: 1,
      bytes: Uint8Array.from({ length: 300 }, (_, i) => i & 0xff),
      bitLength: 2400,
      stuffed: [5, 77, 2399],
      status: 'bad-fcs',
      fcsReceived: 0,
      fcsComputed: 0xffff,
      flippedBit: 0,
      decode: { address: 0, control: 0x13, kind: 'U', command: '?', ns: null, nr: null, pf: true, infoOffset: 2, infoLength: 296 },
    };
    const events: LineEvent[] = [
      { link: null, channel: 'rts', kind: 'rise', sample: 3 },
      { link: 'línea', channel: 'línea', kind: 'flags', sample: 10, endSample: 90, count: 0 },
      { link: 'a b', channel: 'a b', kind: 'idle', sample: 100, endSample: 200 },
    ];
    const items: Item[] = [];
    for (let i = 0; i < 200; i++) {
      const period = i < 100 ? 1e-6 : 1 / 3;
      items.push({ period, frame: { ...(i % 2 ? full : bare), seq: i } }, { period, event: events[i % 3] });
    }
    // 16 slots to start with: every buffer grows many times over
    expect(roundTrip(items, new Set([0, 1, 150]), 16)).toEqual(items);
  });

  it('refuses a batch it cannot read instead of storing nonsense', () => {
    const packer = new BatchPacker();
    packer.setPeriod(1);
    const batch = packer.take(0);
    new Float64Array(batch.nums)[0] = 9;
    expect(() => unpackBatch(batch, [], { period: () => {}, frame: () => {}, event: () => {} })).toThrow(/unknown record 9 at slot 0/);
  });
});
