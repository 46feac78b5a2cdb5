// Inputs shared by the fast-path tests: seeded random line bits with every kind of event, and
// irregular sample indices.
import { encodeLineBits, randomFrame, seededRng, type LineItem } from '../../shared/decoder/encode';

/** Line bits with every kind of event: frames (some stuffed heavily), shared flags and zeros, aborts, idle, noise. */
export function mixedLine(seed: number, items: number): Uint8Array {
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
export function jitteredSamples(seed: number, n: number): Float64Array {
  const rng = seededRng(seed);
  const s = new Float64Array(n);
  let t = 3;
  for (let i = 0; i < n; i++) {
    t += 4 + Math.floor(rng() * 3);
    s[i] = t;
  }
  return s;
}

