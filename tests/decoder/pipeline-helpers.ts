import { encodeLineBits, randomFrame, seededRng, type LineItem, renderWaveform, type Waveform, type WaveformOptions } from '../../shared/decoder/encode';
import { createDecoder, type DecoderOptions, type DecodedFrame, type LineEvent } from '../../shared/decoder';

/** Random traffic for one link: frames (some damaged) with fill flags between. */
export function traffic(seed: number, count: number, damaged = true): { items: LineItem[]; sent: Uint8Array[] } {
  const rng = seededRng(seed);
  const items: LineItem[] = [{ kind: 'flags', count: 2 }];
  const sent: Uint8Array[] = [];
  for (let k = 0; k < count; k++) {
    const bytes = randomFrame(rng, 40);
    sent.push(bytes);
    const r = rng();
    const faults = !damaged ? {} : r < 0.1 ? { flipBits: [Math.floor(rng() * bytes.length * 8)] } : r < 0.15 ? { residueBits: 3 } : {};
    items.push({ kind: 'frame', bytes, faults });
    items.push({ kind: 'flags', count: 1 + Math.floor(rng() * 3) });
  }
  return { items, sent };
}

export function clockedWaveform(links: { name: string; bits: Uint8Array }[], extra: Partial<WaveformOptions> = {}): Waveform {
  return renderWaveform({
    links,
    samplesPerBit: 6,
    samplePeriodSeconds: 1e-7,
    encoding: 'nrz',
    clock: { name: 'clk', edge: 'rising' },
    ...extra,
  });
}

export function runDecoder(options: DecoderOptions, input: Uint8Array, chunkSizes: number[] = [1 << 16]) {
  const frames: DecodedFrame[] = [];
  const events: LineEvent[] = [];
  const dec = createDecoder(options, { frame: (f) => frames.push(f), event: (e) => events.push(e) });
  let at = 0;
  let k = 0;
  while (at < input.length) {
    const end = Math.min(input.length, at + Math.max(1, chunkSizes[k++ % chunkSizes.length]));
    dec.push(input.subarray(at, end));
    at = end;
  }
  dec.finish();
  return { frames, events, dec };
}

export { encodeLineBits };
