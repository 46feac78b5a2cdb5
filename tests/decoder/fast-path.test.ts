// The fast paths must give exactly what the plain paths give: byte-at-a-time deframing of packed
// line bits against the bit-at-a-time reference, and the fused raw + clock path against reader →
// transitions → bit recovery. Inputs are seeded random line bits and captures; the bit patterns
// they exercise are those of ISO/IEC 13239:2002 (flag 01111110, zero-bit insertion after five 1s,
// abort on seven 1s, idle on fifteen; from memory).
import { describe, expect, it } from 'vitest';
import { Deframer, type DeframerOptions } from '../../shared/decoder/deframe';
import { encodeLineBits, randomFrame, seededRng, type LineItem } from '../../shared/decoder/encode/line-bits';
import { renderWaveform } from '../../shared/decoder/encode/waveform';
import { collect } from '../../shared/decoder/encode/writers/collect';
import { rawChunks } from '../../shared/decoder/encode/writers/raw';
import type { DecoderOptions } from '../../shared/decoder/pipeline';
import type { BitChunk, LineEvent, RawFrame } from '../../shared/decoder/types';
import { runDecoder } from './pipeline-helpers';

/** Line bits with every kind of event: frames (some stuffed heavily), shared flags and zeros, aborts, idle, noise. */
function mixedLine(seed: number, items: number): Uint8Array {
  const rng = seededRng(seed);
  const list: LineItem[] = [{ kind: 'flags', count: 2 }];
  for (let k = 0; k < items; k++) {
    const r = rng();
    if (r < 0.45) {
      const bytes = randomFrame(rng, 60);
      // frames of 0xFF / 0x7E octets are stuffed often and hold flag-like data
      if (rng() < 0.2) for (let j = 0; j < bytes.length; j++) if (rng() < 0.5) bytes[j] = rng() < 0.5 ? 0xff : 0x7e;
      list.push({ kind: 'frame', bytes, sharedFlag: rng() < 0.2, faults: rng() < 0.1 ? { residueBits: 1 + Math.floor(rng() * 7) } : {} });
      list.push({ kind: 'flags', count: 1 + Math.floor(rng() * 3), sharedZero: rng() < 0.2 });
    } else if (r < 0.55) {
      list.push({ kind: 'idle', count: 7 + Math.floor(rng() * 20) });
      list.push({ kind: 'flags', count: 1 });
    } else if (r < 0.7) {
      // noise biased toward 1s, so runs of five to seven 1s are common
      const bits: number[] = [];
      const len = 1 + Math.floor(rng() * 200);
      for (let j = 0; j < len; j++) bits.push(rng() < 0.8 ? 1 : 0);
      list.push({ kind: 'raw', bits });
    } else {
      list.push({ kind: 'flags', count: 1 + Math.floor(rng() * 4) });
    }
  }
  return encodeLineBits(list).bits;
}

/** Irregular sample indices (a jittering clock), so a misplaced index shows. */
function jitteredSamples(seed: number, n: number): Float64Array {
  const rng = seededRng(seed);
  const s = new Float64Array(n);
  let t = 3;
  for (let i = 0; i < n; i++) {
    t += 4 + Math.floor(rng() * 3);
    s[i] = t;
  }
  return s;
}

function pack(bits: Uint8Array): Uint8Array {
  const out = new Uint8Array((bits.length + 7) >> 3);
  for (let i = 0; i < bits.length; i++) out[i >> 3] |= bits[i] << (i & 7);
  return out;
}

type Form = 'bitwise' | 'auto-packed' | 'packed';

function deframe(bits: Uint8Array, samples: Float64Array, sizes: number[], form: Form, options: DeframerOptions = {}) {
  const frames: RawFrame[] = [];
  const events: LineEvent[] = [];
  const d = new Deframer('L', { frame: (f) => frames.push(f), event: (e) => events.push(e) }, { ...options, bitwise: form === 'bitwise' });
  let at = 0;
  let k = 0;
  while (at < bits.length) {
    const end = Math.min(bits.length, at + Math.max(1, sizes[k++ % sizes.length]));
    const part = bits.subarray(at, end);
    const chunk: BitChunk =
      form === 'packed'
        ? { bits: new Uint8Array(0), packed: pack(part), samples: samples.subarray(at, end), n: end - at }
        : { bits: part, samples: samples.subarray(at, end), n: end - at };
    d.push(chunk);
    at = end;
  }
  d.finish();
  return { frames, events, pending: d.pendingFrom() };
}

describe('byte-at-a-time deframing', () => {
  it('gives the same frames and events as the bit-at-a-time reference on random lines and chunkings (seeded PRNG)', () => {
    for (let seed = 1; seed <= 8; seed++) {
      const bits = mixedLine(seed, 200);
      const samples = jitteredSamples(seed + 100, bits.length);
      const rng = seededRng(seed + 200);
      const sizes = Array.from({ length: 7 }, () => 1 + Math.floor(rng() * (rng() < 0.5 ? 20 : 3000)));
      const reference = deframe(bits, samples, [bits.length], 'bitwise');
      expect(reference.frames.length).toBeGreaterThan(50);
      expect(reference.frames.some((f) => f.stuffed.length > 0)).toBe(true);
      expect(new Set(reference.frames.map((f) => f.status)).size).toBeGreaterThan(2);
      for (const form of ['auto-packed', 'packed'] as const) {
        for (const split of [[bits.length], [8192], sizes]) {
          const got = deframe(bits, samples, split, form);
          expect(got.frames).toEqual(reference.frames);
          expect(got.events).toEqual(reference.events);
          expect(got.pending).toBe(reference.pending);
        }
      }
    }
  });

  it('closes over-long frames at the same bit as the reference when the octet limit is reached mid-byte', () => {
    for (let seed = 20; seed < 24; seed++) {
      const bits = mixedLine(seed, 200);
      const samples = jitteredSamples(seed, bits.length);
      const options = { maxFrameOctets: 9 };
      const reference = deframe(bits, samples, [bits.length], 'bitwise', options);
      expect(reference.frames.some((f) => f.status === 'abort' && f.bytes.length === 9)).toBe(true);
      expect(deframe(bits, samples, [13, 5000, 64], 'packed', options)).toEqual(reference);
      expect(deframe(bits, samples, [bits.length], 'auto-packed', options)).toEqual(reference);
    }
  });
});

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
