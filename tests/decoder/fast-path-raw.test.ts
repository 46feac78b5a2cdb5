// The fused raw + clock path must give exactly what reader → transitions → bit recovery gives, on
// seeded random clocked captures (line bits from fast-path-helpers.ts).
import { describe, expect, it } from 'vitest';
import { seededRng } from '../../shared/decoder/encode/line-bits';
import { renderWaveform } from '../../shared/decoder/encode/waveform';
import { collect } from '../../shared/decoder/encode/writers/collect';
import { rawChunks } from '../../shared/decoder/encode/writers/raw';
import type { DecoderOptions } from '../../shared/decoder/pipeline';
import { mixedLine } from './fast-path-helpers';
import { runDecoder } from './pipeline-helpers';

describe('fused raw + clock path', () => {
  /** A random clocked capture as raw bytes, with its channels moved to random bit positions. */
  function randomCapture(seed: number) {
    const rng = seededRng(seed);
    const width: 1 | 2 = rng() < 0.5 ? 1 : 2;
    const linkCount = 1 + Math.floor(rng() * 3);
    const links = Array.from({ length: linkCount }, (_, k) => ({ name: `d${k}`, bits: mixedLine(seed * 10 + k, 60) }));
    const handshake = Array.from({ length: Math.floor(rng() * 3) }, (_, k) => ({
      name: `h${k}`,
      initial: (rng() < 0.5 ? 0 : 1) as 0 | 1,
      edges: Array.from({ length: 6 }, (_, j) => ({ bit: Math.floor(rng() * 2000), level: (j % 2 === 0 ? 1 : 0) as 0 | 1 })).sort((a, b) => a.bit - b.bit),
    }));
    const spb = 4 + Math.floor(rng() * 5);
    const edge = rng() < 0.5 ? 'rising' : 'falling';
    const encoding = rng() < 0.5 ? 'nrz' : 'nrzi';
    const invert = rng() < 0.5;
    const w = renderWaveform({
      links,
      samplesPerBit: spb,
      samplePeriodSeconds: 1e-6,
      encoding,
      invert,
      clock: { name: 'clk', edge },
      handshake,
      faults: {
        jitter: rng() * 0.15,
        seed,
        missingClockEdges: [Math.floor(rng() * 500)],
        glitches: [
          { channel: 'clk', sample: Math.floor(rng() * 5000) + 10, width: 1 },
          { channel: 'd0', sample: Math.floor(rng() * 5000) + 10, width: 1 },
        ],
      },
    });
    const plain = collect(rawChunks(w, { width }));
    // move channel c to bit position perm[c]
    const positions = Array.from({ length: width * 8 }, (_, k) => k);
    for (let k = positions.length - 1; k > 0; k--) {
      const j = Math.floor(rng() * (k + 1));
      [positions[k], positions[j]] = [positions[j], positions[k]];
    }
    const bytes = new Uint8Array(plain.length);
    for (let at = 0; at < plain.length; at += width) {
      const v = width === 1 ? plain[at] : plain[at] | (plain[at + 1] << 8);
      let out = 0;
      for (let c = 0; c < w.channels.length; c++) if ((v >> c) & 1) out |= 1 << positions[c];
      bytes[at] = out & 0xff;
      if (width === 2) bytes[at + 1] = out >> 8;
    }
    const channelNames = Array.from({ length: width * 8 }, (_, k) => `unused${k}`);
    for (const c of w.channels) channelNames[positions[c.index]] = c.name;
    const options = {
      format: 'raw' as const,
      sampleRate: 1e6,
      rawWidth: width,
      channelNames,
      clock: 'clk',
      data: links.map((l) => l.name),
      handshake: handshake.map((h) => h.name),
      edge,
      encoding,
      invert,
    } satisfies DecoderOptions;
    const sizes = Array.from({ length: 5 }, () => 1 + Math.floor(rng() * (rng() < 0.3 ? 7 : 20000)));
    return { bytes, options, sizes, describe: `seed ${seed}: width ${width}, ${linkCount} links, ${handshake.length} handshake, ${edge}, ${encoding}${invert ? ', inverted' : ''}` };
  }

  it('gives the same frames and line events as reader → transitions → bit recovery on random captures (seeded PRNG)', () => {
    for (let seed = 1; seed <= 16; seed++) {
      const { bytes, options, sizes, describe: what } = randomCapture(seed);
      const general = runDecoder({ ...options, rawFastPath: false }, bytes, [bytes.length]);
      expect(general.dec.fatal(), what).toBeNull();
      expect(general.frames.filter((f) => f.status === 'ok').length, what).toBeGreaterThan(5);
      for (const split of [[bytes.length], sizes]) {
        const fused = runDecoder({ ...options, rawFastPath: true }, bytes, split);
        expect(fused.frames, what).toEqual(general.frames);
        expect(fused.events, what).toEqual(general.events);
        expect(fused.dec.issues, what).toEqual(general.dec.issues);
        expect(fused.dec.bytesRead, what).toBe(bytes.length);
      }
    }
  });

  it('reports half a 2-byte sample at the end and no samples at all just as the general path does', () => {
    for (const bytes of [new Uint8Array([1, 0, 3, 0, 7]), new Uint8Array(0), new Uint8Array([5])]) {
      const options: DecoderOptions = { format: 'raw', sampleRate: 1e6, rawWidth: 2, clock: '0', data: ['1'] };
      const general = runDecoder({ ...options, rawFastPath: false }, bytes, [2]);
      const fused = runDecoder({ ...options, rawFastPath: true }, bytes, [3]);
      expect(fused.dec.issues).toEqual(general.dec.issues);
      expect(fused.frames).toEqual(general.frames);
    }
  });
});
