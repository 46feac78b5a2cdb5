import { describe, expect, it } from 'vitest';
import { renderWaveform, collect, rawChunks } from '../../shared/decoder/encode';
import { RawReader } from '../../shared/decoder/readers';
import type { ReaderOptions } from '../../shared/decoder';
import { feed, randomBits, randomSplit, recordingSink, waveformList } from './support/signals';

function read(input: Uint8Array | Uint8Array[], opts: ReaderOptions) {
  const sink = recordingSink();
  const reader = new RawReader(opts, sink);
  feed(reader, Array.isArray(input) ? input : [input]);
  return { reader, rec: sink.rec };
}

describe('raw binary reader', () => {
  it('reads one byte per sample, bit n as channel n, and reports only changes', () => {
    const { rec, reader } = read(Uint8Array.of(0b01, 0b01, 0b11, 0b10, 0b10), { sampleRate: 1e6, channelNames: ['clk', 'data'] });
    expect(reader.issues).toEqual([]);
    expect(rec.samplePeriodSeconds).toBe(1e-6);
    expect(rec.channels.map((c) => c.name)).toEqual(['clk', 'data', '2', '3', '4', '5', '6', '7']);
    const initial = [0, 1, 2, 3, 4, 5, 6, 7].map((c) => [c, 0, c === 0 ? 1 : 0]);
    const end = [0, 1, 2, 3, 4, 5, 6, 7].map((c) => [c, 4, c === 1 ? 1 : 0]);
    expect(rec.list).toEqual([...initial, [1, 2, 1], [0, 3, 0], ...end]);
  });

  it('reads two bytes per sample little-endian as 16 channels', () => {
    const { rec } = read(Uint8Array.of(0x00, 0x00, 0x00, 0x80, 0x01, 0x80), { sampleRate: 1e6, rawWidth: 2 });
    expect(rec.channels).toHaveLength(16);
    expect(rec.list.filter(([, s]) => s > 0 && s < 2)).toEqual([[15, 1, 1]]);
    // the change of bit 0 at sample 2, then the end-of-capture repeat of the levels that are 1
    expect(rec.list.filter(([, s, v]) => s === 2 && v === 1).map(([c]) => c)).toEqual([0, 0, 15]);
  });

  it('stops with a clear error when no sample rate is given', () => {
    const { reader, rec } = read(Uint8Array.of(1, 2, 3), {});
    expect(reader.fatal()?.message).toContain('give the sample rate');
    expect(rec.headers).toBe(0);
  });

  it('reports half a 2-byte sample at the end', () => {
    const { reader } = read(Uint8Array.of(1, 0, 1), { sampleRate: 1, rawWidth: 2 });
    expect(reader.issues[0]).toMatchObject({ offset: 2, expected: 'two bytes per sample' });
  });

  it('stops with a clear error on an empty file', () => {
    expect(read(new Uint8Array(0), { sampleRate: 1 }).reader.fatal()?.message).toContain('no samples');
  });

  for (const width of [1, 2] as const) {
    it(`gives identical output for any chunk split and reads back the encoder's ${width}-byte samples`, () => {
      const w = renderWaveform({
        links: [
          { name: 'a', bits: randomBits(500, 1) },
          { name: 'b', bits: randomBits(500, 2) },
        ],
        samplesPerBit: 6,
        samplePeriodSeconds: 1e-8,
        encoding: 'nrzi',
        clock: { edge: 'rising' },
        handshake: [{ name: 'rts', initial: 0, edges: [{ bit: 10, level: 1 }] }],
        faults: { jitter: 0.1, seed: 2, glitches: [{ channel: 'a', sample: 333, width: 1 }] },
      });
      const bytes = collect(rawChunks(w, { width, chunkSize: 777 }));
      expect(bytes.length).toBe(w.totalSamples * width);
      const want = waveformList(w);
      for (let seed = 1; seed <= 5; seed++) {
        const { rec, reader } = read(randomSplit(bytes, seed, 64), { sampleRate: 1e8, rawWidth: width });
        expect(reader.bytesRead).toBe(bytes.length);
        // channels beyond the waveform's stay 0: only their initial and end transitions appear
        expect(rec.list.filter(([c]) => c < w.channels.length)).toEqual(want);
        expect(rec.list.filter(([c]) => c >= w.channels.length)).toHaveLength((width * 8 - w.channels.length) * 2);
      }
    });
  }
});
