import { Deframer, type LineEvent, type RawFrame } from '../../shared/decoder';

/** Runs line bits through a Deframer in the given chunk sizes (cycled); sample index = bit index. */
export function deframeBits(bits: Uint8Array, chunkSizes: number[] = [bits.length || 1], minOctets?: number) {
  const frames: RawFrame[] = [];
  const events: LineEvent[] = [];
  const d = new Deframer('L', { frame: (f) => frames.push(f), event: (e) => events.push(e) }, { minOctets });
  pushInChunks(d, bits, chunkSizes);
  d.finish();
  return { frames, events };
}

/** Pushes line bits into a Deframer in the given chunk sizes (cycled); sample index = bit index. Does not finish it. */
export function pushInChunks(d: Deframer, bits: Uint8Array, chunkSizes: number[]): void {
  const samples = Float64Array.from(bits, (_, i) => i);
  for (let at = 0, k = 0; at < bits.length; ) {
    const end = Math.min(bits.length, at + Math.max(1, chunkSizes[k++ % chunkSizes.length]));
    d.push({ bits: bits.subarray(at, end), samples: samples.subarray(at, end), n: end - at });
    at = end;
  }
}

export const bitsOf = (s: string) => Uint8Array.from(s.replace(/\s+/g, ''), (c) => (c === '1' ? 1 : 0));
