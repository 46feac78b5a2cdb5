// Captures for the settings finder's tests: random frames on two links, encoded under a chosen
// line setting by our own encoder, with a share of damaged frames.
import { encodeLineBits, randomFrame, seededRng, type LineItem, renderWaveform, rawBytes } from '../../shared/decoder/encode';
import type { CaptureSource } from '../../shared/decoder/finder';

export interface LineSetting {
  encoding: 'nrz' | 'nrzi';
  edge: 'rising' | 'falling';
  invert: boolean;
  clocked: boolean;
  bitRate: number;
  fcs: 16 | 32;
  /** samples per bit cell */
  samplesPerBit: number;
}

/** Line bits of one link: `count` random frames, every hundredth one damaged (a flipped bit). */
export function linkBits(seed: number, count: number, fcs: 16 | 32, damagedEvery = 100): { bits: Uint8Array; damaged: number } {
  const rng = seededRng(seed);
  const items: LineItem[] = [{ kind: 'flags', count: 3 }];
  let damaged = 0;
  for (let k = 0; k < count; k++) {
    const bytes = randomFrame(rng, 48);
    const bad = k % damagedEvery === damagedEvery - 1;
    if (bad) damaged++;
    items.push({ kind: 'frame', bytes, faults: bad ? { flipBits: [Math.floor(rng() * bytes.length * 8)] } : undefined });
    items.push({ kind: 'flags', count: 1 + Math.floor(rng() * 4) });
  }
  return { bits: encodeLineBits(items, { fcs }).bits, damaged };
}

/** A raw one-byte-per-sample capture (clock on bit 0 when clocked, links a and b after it). */
export function rawCapture(s: LineSetting, seed: number, frames = 100): { bytes: Uint8Array; sampleRate: number; damaged: number } {
  const a = linkBits(seed, frames, s.fcs);
  const b = linkBits(seed + 1, frames, s.fcs);
  const sampleRate = s.bitRate * s.samplesPerBit;
  const w = renderWaveform({
    links: [
      { name: 'a', bits: a.bits },
      { name: 'b', bits: b.bits },
    ],
    samplesPerBit: s.samplesPerBit,
    samplePeriodSeconds: 1 / sampleRate,
    encoding: s.encoding,
    invert: s.invert,
    clock: s.clocked ? { name: 'clk', edge: s.edge } : undefined,
    // a recovered clock must cope with a line a little off its rate and with jitter
    faults: s.clocked ? undefined : { rateError: 0.006, jitter: 0.05, seed },
  });
  return { bytes: rawBytes(w), sampleRate, damaged: a.damaged + b.damaged };
}

/** A source that hands out each read in random shorter pieces. */
export function choppySource(bytes: Uint8Array, seed: number): CaptureSource {
  const rng = seededRng(seed);
  return {
    size: bytes.length,
    read: (offset, length) => bytes.subarray(offset, offset + Math.max(1, Math.floor(rng() * Math.min(length, 20000)))),
  };
}
