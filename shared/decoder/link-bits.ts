import type { BitChunk, BitRecoverySink, LineEncoding } from './types';

export const BIT_CHUNK_SIZE = 8192;

/**
 * One link's output: turns sampled line levels into bits (NRZ or NRZI, inversion) and hands
 * them to the sink in reused chunks.
 *
 * Inversion acts on the line level, as a swapped pair of wires would: it flips NRZ bits and
 * leaves NRZI bits unchanged, since NRZI carries data in transitions, not levels.
 */
export class LinkBits {
  readonly chunk: BitChunk;
  /** NRZI reference: the level of the previous bit cell; starts as the line's initial level */
  ref = -1;
  private readonly nrzi: boolean;
  private readonly flip: number;

  constructor(
    readonly link: string,
    encoding: LineEncoding,
    invert: boolean,
    private readonly sink: BitRecoverySink,
  ) {
    this.nrzi = encoding === 'nrzi';
    this.flip = invert ? 1 : 0;
    // room for one more batch step beyond a full chunk, so put() never has to check
    this.chunk = { bits: new Uint8Array(BIT_CHUNK_SIZE + 1), samples: new Float64Array(BIT_CHUNK_SIZE + 1), n: 0 };
  }

  /** like sampled(), without handing on a full chunk: the caller checks `full` and flushes */
  put(level: number, sample: number): void {
    let bit: number;
    if (this.nrzi) {
      bit = level === this.ref || this.ref < 0 ? 1 : 0;
      this.ref = level;
    } else {
      bit = level ^ this.flip;
    }
    const c = this.chunk;
    const i = c.n;
    c.bits[i] = bit;
    c.samples[i] = sample;
    c.n = i + 1;
  }

  get full(): boolean {
    return this.chunk.n >= BIT_CHUNK_SIZE;
  }

  /** a bit cell sampled at `sample` showed line level `level` (0 or 1) */
  sampled(level: number, sample: number): void {
    let bit: number;
    if (this.nrzi) {
      bit = level === this.ref || this.ref < 0 ? 1 : 0;
      this.ref = level;
    } else {
      bit = level ^ this.flip;
    }
    const c = this.chunk;
    const i = c.n;
    c.bits[i] = bit;
    c.samples[i] = sample;
    c.n = i + 1;
    if (i + 1 >= BIT_CHUNK_SIZE) this.flush();
  }

  flush(): void {
    if (this.chunk.n > 0) {
      this.sink.bits(this.link, this.chunk);
      this.chunk.n = 0;
    }
  }
}
