import { Deframer, type LineEvent, type RawFrame } from '../../shared/decoder';

/** Runs line bits through a Deframer in the given chunk sizes (cycled); sample index = bit index. */
export function deframeBits(bits: Uint8Array, chunkSizes: number[] = [bits.length || 1], minOctets?: number) {
  const frames: RawFrame[] = [];
  const events: LineEvent[] = [];
  const d = new Deframer('L', { frame: (f) => frames.push(f), event: (e) => events.push(e) }, { minOctets });
  const samples = new Float64Array(bits.length);
  for (let i = 0; i < bits.length; i++) samples[i] = i;
  let at = 0;
  let k = 0;
  while (at < bits.length) {
    const size = Math.max(1, chunkSizes[k++ % chunkSizes.length]);
    const end = Math.min(bits.length, at + size);
    d.push({ bits: bits.subarray(at, end), samples: samples.subarray(at, end), n: end - at });
    at = end;
  }
  d.finish();
  return { frames, events };
}

export const bitsOf = (s: string) => Uint8Array.from(s.replace(/\s+/g, ''), (c) => (c === '1' ? 1 : 0));
