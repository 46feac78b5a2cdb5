import { describe, expect, it } from 'vitest';
import { BitRecovery, Deframer, type BitChunk, type BitRecoveryOptions, type CaptureFormat, type RawFrame, type ReaderOptions, type Transitions } from '../../shared/decoder';
import { encodeLineBits, randomFrame, seededRng, type LineItem, renderWaveform, type Waveform, collect, csvChunks, frameLogChunks, octetsFromLineBits, rawChunks, vcdChunks } from '../../shared/decoder/encode';
import { createReader } from '../../shared/decoder/readers';
import { randomBits, randomSplit, recoverySink } from './support/signals';

type SampleFormat = 'vcd' | 'csv' | 'raw';

function write(w: Waveform, format: SampleFormat): { bytes: Uint8Array; opts: ReaderOptions } {
  const sampleRate = Math.round(1 / w.samplePeriodSeconds);
  if (format === 'vcd') return { bytes: collect(vcdChunks(w)), opts: {} };
  if (format === 'csv') return { bytes: collect(csvChunks(w)), opts: {} };
  return { bytes: collect(rawChunks(w)), opts: { sampleRate, channelNames: w.channels.map((c) => c.name) } };
}

/** bytes → reader (random chunks) → BitRecovery, with the channels found by name */
function readBits(
  format: SampleFormat,
  bytes: Uint8Array,
  readerOpts: ReaderOptions,
  roles: { clock?: string; data: string[] },
  opts: Omit<BitRecoveryOptions, 'samplePeriodSeconds' | 'clock' | 'data'>,
  onBits?: (link: string, chunk: BitChunk) => void,
) {
  const sink = recoverySink();
  let br: BitRecovery | null = null;
  const reader = createReader(format, readerOpts, {
    header(channels, period) {
      const index = (name: string) => channels.find((c) => c.name === name)!.index;
      br = new BitRecovery(
        {
          ...opts,
          samplePeriodSeconds: period,
          clock: roles.clock ? index(roles.clock) : undefined,
          data: roles.data.map((link) => ({ channel: index(link), link })),
        },
        onBits ? { bits: onBits, event: () => {} } : sink,
      );
    },
    transitions(t: Transitions) {
      br!.transitions(t);
    },
  });
  for (const piece of randomSplit(bytes, bytes.length, 5000)) reader.push(piece);
  reader.finish();
  br!.finish();
  expect(reader.fatal()).toBeNull();
  return sink.r;
}

const formats: SampleFormat[] = ['vcd', 'csv', 'raw'];

describe('signals round trip: line bits → waveform → file → reader → bits', () => {
  for (const format of formats) {
    for (const encoding of ['nrz', 'nrzi'] as const) {
      it(`gives back the same bits through ${format}, clocked, ${encoding}, inverted`, () => {
        const bits = randomBits(4000, 17);
        const w = renderWaveform({
          links: [{ name: 'tx', bits }],
          samplesPerBit: 6,
          samplePeriodSeconds: 1e-7,
          encoding,
          invert: true,
          clock: { edge: 'falling', name: 'clk' },
          faults: { jitter: 0.15, seed: 2 },
        });
        const { bytes, opts } = write(w, format);
        const r = readBits(format, bytes, opts, { clock: 'clk', data: ['tx'] }, { edge: 'falling', encoding, invert: true });
        expect(r.bits.get('tx')).toEqual(Array.from(bits));
      });

      it(`gives back the same bits through ${format} without a clock, ${encoding}, ±3 % rate error and jitter`, () => {
        const bits = randomBits(4000, 23).map((b, i) => (i % 5 === 4 ? 0 : b)); // no long runs
        for (const rateError of [-0.03, 0.03]) {
          const w = renderWaveform({
            links: [{ name: 'rx', bits }],
            samplesPerBit: 8,
            samplePeriodSeconds: 1e-7,
            encoding,
            faults: { jitter: 0.1, rateError, seed: 6 },
          });
          const { bytes, opts } = write(w, format);
          const r = readBits(format, bytes, opts, { data: ['rx'] }, { edge: 'rising', encoding, invert: false, bitRate: 1.25e6 });
          const want = Array.from(bits.slice(bits.indexOf(0)));
          expect(r.bits.get('rx')!.slice(0, want.length)).toEqual(want);
        }
      });
    }
  }
});

/** random frames between fill flags, two links, with the frames helper's encoder */
function traffic(seed: number) {
  const rng = seededRng(seed);
  const items: LineItem[] = [{ kind: 'flags', count: 3 }];
  for (let i = 0; i < 25; i++) {
    items.push({ kind: 'frame', bytes: randomFrame(rng, 60), sharedFlag: i % 4 === 1 });
    items.push(i % 5 === 0 ? { kind: 'idle', count: 20 } : { kind: 'flags', count: 1 + (i % 3) });
  }
  items.push({ kind: 'flags', count: 2 });
  return encodeLineBits(items);
}

function deframe(push: (sink: (link: string, chunk: BitChunk) => void) => void, links: string[]): Map<string, RawFrame[]> {
  const out = new Map<string, RawFrame[]>(links.map((l) => [l, []]));
  const deframers = new Map(links.map((l) => [l, new Deframer(l, { frame: (f) => out.get(l)!.push(f), event: () => {} })]));
  push((link, chunk) => deframers.get(link)!.push(chunk));
  for (const d of deframers.values()) d.finish();
  return out;
}

describe('full round trip: frames → line bits → waveform → each format → reader → bits → deframer → same frames', () => {
  const a = traffic(1);
  const b = traffic(2);
  const cases: { format: SampleFormat; clocked: boolean; encoding: 'nrz' | 'nrzi' }[] = [];
  for (const format of formats) {
    cases.push({ format, clocked: true, encoding: 'nrzi' }, { format, clocked: true, encoding: 'nrz' }, { format, clocked: false, encoding: 'nrzi' });
  }
  for (const { format, clocked, encoding } of cases) {
    it(`recovers every frame on both links through ${format}, ${clocked ? 'clocked' : 'clock recovered'}, ${encoding}`, () => {
      const w = renderWaveform({
        links: [
          { name: 'port2-tx', bits: a.bits },
          { name: 'port2-rx', bits: b.bits },
        ],
        samplesPerBit: clocked ? 5 : 10,
        samplePeriodSeconds: 1e-7,
        encoding,
        clock: clocked ? { edge: 'rising', name: 'trxc' } : undefined,
        faults: { jitter: 0.1, rateError: clocked ? 0 : 0.02, seed: 3 },
      });
      const { bytes, opts } = write(w, format);
      const frames = deframe(
        (sink) =>
          readBits(
            format,
            bytes,
            opts,
            { clock: clocked ? 'trxc' : undefined, data: ['port2-tx', 'port2-rx'] },
            { edge: 'rising', encoding, invert: false, bitRate: clocked ? undefined : 1e6 },
            sink,
          ),
        ['port2-tx', 'port2-rx'],
      );
      for (const [link, enc] of [
        ['port2-tx', a],
        ['port2-rx', b],
      ] as const) {
        const got = frames.get(link)!;
        expect(got.map((f) => Array.from(f.bytes))).toEqual(enc.frames.map((f) => Array.from(f.wire)));
        expect(got.every((f) => f.status === 'ok')).toBe(true);
      }
    });
  }

  it('recovers every frame from line-bit octets', () => {
    const octets = octetsFromLineBits(a.bits);
    const frames = deframe((sink) => {
      const reader = createReader('octets', { bitRate: 800_000, channelNames: ['port1'] }, { header() {}, bits: sink });
      for (const piece of randomSplit(octets, 1, 300)) reader.push(piece);
      reader.finish();
    }, ['port1']);
    expect(frames.get('port1')!.map((f) => Array.from(f.bytes))).toEqual(a.frames.map((f) => Array.from(f.wire)));
  });

  it('recovers every frame from a frame log', () => {
    const log = collect(frameLogChunks(a.frames.map((f, i) => ({ seconds: f.startBit / 800_000, bytes: f.wire, link: i % 2 ? 'rx' : 'tx' }))));
    const got: { link: string; bytes: number[] }[] = [];
    const reader = createReader('framelog', {}, { header() {}, frame: (link, _f, _l, bytes) => got.push({ link, bytes: Array.from(bytes) }) });
    for (const piece of randomSplit(log, 2, 300)) reader.push(piece);
    reader.finish();
    expect(got).toEqual(a.frames.map((f, i) => ({ link: i % 2 ? 'rx' : 'tx', bytes: Array.from(f.wire) })));
  });
});

describe('createReader', () => {
  it('makes the reader of each format', () => {
    const formats: CaptureFormat[] = ['vcd', 'csv', 'raw', 'octets', 'framelog'];
    for (const f of formats) {
      const reader = createReader(f, { sampleRate: 1 }, { header() {}, transitions() {}, bits() {}, frame() {} } as never);
      expect(reader.bytesRead).toBe(0);
      expect(reader.issues).toEqual([]);
    }
  });
});
