import { collect } from './collect';
import type { Waveform } from '../waveform';

export interface RawWriterOptions {
  /** bytes per sample: 1 (8 channels) or 2 (16 channels, little-endian) */
  width?: 1 | 2;
  /** bytes per yielded chunk */
  chunkSize?: number;
}

/** Raw binary samples: bit n of each sample is channel n. Streams for big benchmark files. */
export function* rawChunks(w: Waveform, opts: RawWriterOptions = {}): Generator<Uint8Array> {
  const width = opts.width ?? 1;
  if (w.channels.length > width * 8) throw new Error(`${w.channels.length} channels do not fit ${width}-byte samples`);
  const samplesPerChunk = Math.max(1, Math.floor((opts.chunkSize ?? 1 << 20) / width));
  let buf = new Uint8Array(samplesPerChunk * width);
  let chunkStart = 0; // sample index of buf[0]
  let level = 0; // current sample word
  let filled = 0; // samples before this one are written
  const fill = (upTo: number) => {
    // writes the current word for samples [filled, upTo)
    while (filled < upTo) {
      const end = Math.min(upTo, chunkStart + samplesPerChunk);
      if (width === 1) buf.fill(level, filled - chunkStart, end - chunkStart);
      else for (let s = filled; s < end; s++) {
        const o = (s - chunkStart) * 2;
        buf[o] = level & 0xff;
        buf[o + 1] = level >> 8;
      }
      filled = end;
      if (filled === chunkStart + samplesPerChunk) return true;
    }
    return false;
  };
  for (const t of w.batches()) {
    for (let i = 0; i < t.n; i++) {
      const s = t.sample[i];
      while (filled < s) {
        if (fill(s)) {
          yield buf;
          buf = new Uint8Array(samplesPerChunk * width);
          chunkStart += samplesPerChunk;
        }
      }
      const bit = 1 << t.channel[i];
      level = t.value[i] === 1 ? level | bit : level & ~bit;
    }
  }
  while (filled < w.totalSamples) {
    if (fill(w.totalSamples)) {
      yield buf;
      buf = new Uint8Array(samplesPerChunk * width);
      chunkStart += samplesPerChunk;
    }
  }
  const rest = (filled - chunkStart) * width;
  if (rest > 0) yield buf.subarray(0, rest);
}

/** the whole file at once (small files, tests) */
export function rawBytes(w: Waveform, opts: RawWriterOptions = {}): Uint8Array {
  return collect(rawChunks(w, opts));
}
