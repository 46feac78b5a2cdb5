// The byte-at-a-time deframer must give exactly what the bit-at-a-time reference gives, on seeded
// random line bits whose patterns are those of ISO/IEC 13239:2002 (flag 01111110, zero-bit
// insertion after five 1s, abort on seven 1s, idle on fifteen; from memory).
import { describe, expect, it } from 'vitest';
import { Deframer, type DeframerOptions, type BitChunk, type LineEvent, type RawFrame } from '../../shared/decoder';
import { seededRng } from '../../shared/decoder/encode';
import { jitteredSamples, mixedLine } from './fast-path-helpers';

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
      // frames' octets in shared blocks (the CLI's way): every frame still holds its own octets
      // once all later frames are written
      const shared = deframe(bits, samples, sizes, 'packed', { sharedBytes: true });
      expect(shared.frames).toEqual(reference.frames);
      expect(new Set(shared.frames.map((f) => f.bytes.buffer)).size).toBeLessThan(shared.frames.length);
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

