import { BIT_CHUNK_SIZE as CHUNK } from './link-bits';
import type { BitChunk, BitRecoveryOptions, BitRecoverySink } from './types';

/** module-local copy: imported bindings cost a lookup in hot loops */
const BIT_CHUNK_SIZE = CHUNK;

/**
 * Raw binary samples with a clock channel, straight to packed line bits: one pass over the
 * bytes, no Transitions in between. Gives exactly what RawReader → BitRecovery gives (tested
 * against it): a bit per link on each clock edge, taking the data level of the sample before
 * the edge (data changing at the very sample of the edge counts as changing after it), NRZI
 * against the line's initial level, inversion on the line level, handshake lines as events.
 *
 * Sample indices stay exact per bit (a clock may jitter), written beside the packed bits.
 */
export class ClockedRawBits {
  private readonly links: number;
  private readonly names: string[];
  /** per link: data channel, NRZI reference level, inversion, bit count, partial byte */
  private readonly dataBit: Int32Array;
  private readonly ref: Int32Array;
  private readonly flip: number;
  private readonly nrzi: boolean;
  private readonly chunks: BitChunk[];
  private readonly acc: Int32Array;
  private readonly clockMask: number;
  /** the clock bit's value in a sample on the active level */
  private readonly clockActive: number;
  private readonly handshakeMask: number;
  private readonly clockChannel: number;
  private readonly handshake: { channel: number; name: string; link: string | null }[];
  /** the previous sample, -1 before the first */
  private prev = -1;

  constructor(
    opts: BitRecoveryOptions,
    private readonly sink: BitRecoverySink,
  ) {
    if (opts.clock === undefined) throw new Error('ClockedRawBits needs a clock channel');
    this.clockChannel = opts.clock;
    this.clockMask = 1 << opts.clock;
    this.clockActive = opts.edge === 'rising' ? this.clockMask : 0;
    this.links = opts.data.length;
    this.names = opts.data.map((d) => d.link);
    this.dataBit = Int32Array.from(opts.data.map((d) => d.channel));
    this.ref = new Int32Array(this.links).fill(-1);
    this.acc = new Int32Array(this.links);
    this.nrzi = opts.encoding === 'nrzi';
    this.flip = opts.invert ? 1 : 0;
    // every link takes a bit on the same clock edges, so one array of sample indices serves all
    // (the deframers read it during push, and every link's chunk is handed on before it is reused)
    const samples = new Float64Array(BIT_CHUNK_SIZE + 1);
    this.chunks = opts.data.map(() => ({ bits: new Uint8Array(0), packed: new Uint8Array(BIT_CHUNK_SIZE / 8 + 1), samples, n: 0 }));
    this.handshake = (opts.handshake ?? []).map((h) => ({ channel: h.channel, name: h.name, link: h.link ?? null }));
    let hm = 0;
    for (const h of this.handshake) hm |= 1 << h.channel;
    // a handshake line that is also the clock or a data line is the general path's business
    this.handshakeMask = hm & ~this.clockMask;
  }

  /**
   * Whole samples bytes[start, end) (`width` bytes each, little-endian), the first at sample
   * index `firstSample`.
   */
  samples(bytes: Uint8Array, start: number, end: number, firstSample: number, width: 1 | 2): void {
    let i = start;
    // sample index of bytes[start] is firstSample; of sample k after it, firstSample + k
    const base = firstSample - start / width;
    if (i < end && this.prev < 0) {
      const first = width === 1 ? bytes[i] : bytes[i] | (bytes[i + 1] << 8);
      for (let k = 0; k < this.links; k++) this.ref[k] = (first >> this.dataBit[k]) & 1;
      this.prev = first;
      i += width;
    }
    while (i < end) {
      i = width === 1 ? this.scan8(bytes, i, end, base) : this.scan16(bytes, i, end, base);
      if (this.chunks[0].n >= BIT_CHUNK_SIZE) this.flushAll();
      else if (i < end) {
        // stopped at a sample where a handshake line changed
        const v = width === 1 ? bytes[i] : bytes[i] | (bytes[i + 1] << 8);
        this.handshakeSample(v, base + i / width);
        i += width;
      }
    }
  }

  /**
   * One-byte samples from `from` until `end`, a full chunk, or a handshake change (not consumed).
   * Four samples at a time through an aligned 32-bit view where it can: the clock bits of four
   * samples and of the sample before each are compared at once, and only clock edges cost more.
   */
  private scan8(bytes: Uint8Array, from: number, end: number, base: number): number {
    if (this.links > 2) return this.scanMany(bytes, from, end, base, 1);
    const cm = this.clockMask * 0x01010101;
    const rising = this.clockActive !== 0;
    const hm = this.handshakeMask * 0x01010101;
    let prev = this.prev;
    const two = this.links === 2;
    const nrzi = this.nrzi;
    const flip = this.flip;
    const c0 = this.chunks[0];
    const c1 = two ? this.chunks[1] : c0;
    const d0 = this.dataBit[0];
    const d1 = two ? this.dataBit[1] : d0;
    const p0 = c0.packed!;
    const p1 = c1.packed!;
    const sm = c0.samples;
    let r0 = this.ref[0];
    let r1 = two ? this.ref[1] : 0;
    let a0 = this.acc[0];
    let a1 = two ? this.acc[1] : 0;
    let n = c0.n;
    // the aligned words inside [from, end)
    const head = (4 - ((bytes.byteOffset + from) & 3)) & 3;
    const wStart = from + head;
    const wCount = end - wStart >= 4 ? (end - wStart) >> 2 : 0;
    const words = wCount > 0 ? new Int32Array(bytes.buffer, bytes.byteOffset + wStart, wCount) : null;
    const wEnd = wStart + wCount * 4;
    const wordLimit = BIT_CHUNK_SIZE - 4;
    let i = from;
    // bytes one at a time until `stop`; then whole words while they last
    let stop = words !== null ? wStart : end;
    while (i < end) {
      while (i < stop) {
        const w = bytes[i];
        const before = prev;
        if (((w ^ before) & hm) !== 0) {
          stop = -1;
          break;
        }
        if ((w ^ before) & cm && (rising ? w & cm : before & cm)) {
          const s = base + i;
          const l0 = (before >> d0) & 1;
          a0 |= (nrzi ? 1 ^ l0 ^ r0 : l0 ^ flip) << (n & 7);
          r0 = l0;
          sm[n] = s;
          if (two) {
            const l1 = (before >> d1) & 1;
            a1 |= (nrzi ? 1 ^ l1 ^ r1 : l1 ^ flip) << (n & 7);
            r1 = l1;
          }
          n++;
          if ((n & 7) === 0) {
            p0[(n >> 3) - 1] = a0;
            a0 = 0;
            if (two) {
              p1[(n >> 3) - 1] = a1;
              a1 = 0;
            }
            if (n >= BIT_CHUNK_SIZE) {
              prev = w;
              i++;
              stop = -1;
              break;
            }
          }
        }
        prev = w;
        i++;
      }
      // a handshake change (i not consumed) or a full chunk: the caller takes over
      if (stop < 0 || i >= end) break;
      // whole words from i (aligned) while the chunk has room for four more bits
      let j = (i - wStart) >> 2;
      for (; j < wCount && n <= wordLimit; j++) {
        const w = words![j];
        // byte k of `before` is the sample before byte k of w
        const before = (w << 8) | prev;
        if (((w ^ before) & hm) !== 0) break;
        let edges = (rising ? w & ~before : ~w & before) & cm;
        while (edges !== 0) {
          const low = edges & -edges;
          const k = (31 - Math.clz32(low)) >> 3;
          edges ^= low;
          const level = before >>> (k << 3);
          const s = base + wStart + (j << 2) + k;
          const l0 = (level >> d0) & 1;
          a0 |= (nrzi ? 1 ^ l0 ^ r0 : l0 ^ flip) << (n & 7);
          r0 = l0;
          sm[n] = s;
          if (two) {
            const l1 = (level >> d1) & 1;
            a1 |= (nrzi ? 1 ^ l1 ^ r1 : l1 ^ flip) << (n & 7);
            r1 = l1;
          }
          n++;
          if ((n & 7) === 0) {
            p0[(n >> 3) - 1] = a0;
            a0 = 0;
            if (two) {
              p1[(n >> 3) - 1] = a1;
              a1 = 0;
            }
          }
        }
        prev = w >>> 24;
      }
      i = wStart + (j << 2);
      // the rest one byte at a time: the tail, the word with a handshake change, or up to a full chunk
      stop = j < wCount ? i + 4 : end;
      if (stop > end) stop = end;
    }
    this.prev = prev;
    this.ref[0] = r0;
    this.acc[0] = a0;
    c0.n = n;
    if (two) {
      this.ref[1] = r1;
      this.acc[1] = a1;
      c1.n = n;
    }
    return i;
  }

  private scan16(bytes: Uint8Array, from: number, end: number, base: number): number {
    if (this.links > 2) return this.scanMany(bytes, from, end, base, 2);
    const cm = this.clockMask;
    const active = this.clockActive;
    const hm = this.handshakeMask;
    let prev = this.prev;
    const two = this.links === 2;
    const nrzi = this.nrzi;
    const flip = this.flip;
    const c0 = this.chunks[0];
    const c1 = two ? this.chunks[1] : c0;
    const d0 = this.dataBit[0];
    const d1 = two ? this.dataBit[1] : d0;
    const p0 = c0.packed!;
    const p1 = c1.packed!;
    const s0 = c0.samples;
    let r0 = this.ref[0];
    let r1 = two ? this.ref[1] : 0;
    let a0 = this.acc[0];
    let a1 = two ? this.acc[1] : 0;
    let n = c0.n;
    let i = from;
    for (; i < end; i += 2) {
      const b = bytes[i] | (bytes[i + 1] << 8);
      if (b === prev) continue;
      const d = b ^ prev;
      if ((d & hm) !== 0) break;
      if ((d & cm) !== 0 && (b & cm) === active) {
        const s = base + i / 2;
        const l0 = (prev >> d0) & 1;
        a0 |= (nrzi ? 1 ^ l0 ^ r0 : l0 ^ flip) << (n & 7);
        r0 = l0;
        s0[n] = s;
        if (two) {
          const l1 = (prev >> d1) & 1;
          a1 |= (nrzi ? 1 ^ l1 ^ r1 : l1 ^ flip) << (n & 7);
          r1 = l1;
        }
        n++;
        if ((n & 7) === 0) {
          p0[(n >> 3) - 1] = a0;
          a0 = 0;
          if (two) {
            p1[(n >> 3) - 1] = a1;
            a1 = 0;
          }
          if (n >= BIT_CHUNK_SIZE) {
            prev = b;
            i += 2;
            break;
          }
        }
      }
      prev = b;
    }
    this.prev = prev;
    this.ref[0] = r0;
    this.acc[0] = a0;
    c0.n = n;
    if (two) {
      this.ref[1] = r1;
      this.acc[1] = a1;
      c1.n = n;
    }
    return i;
  }

  /** three or more links: the same, with the per-link state in arrays */
  private scanMany(bytes: Uint8Array, from: number, end: number, base: number, width: 1 | 2): number {
    const cm = this.clockMask;
    const active = this.clockActive;
    const hm = this.handshakeMask;
    let prev = this.prev;
    let n = this.chunks[0].n;
    let i = from;
    for (; i < end; i += width) {
      const b = width === 1 ? bytes[i] : bytes[i] | (bytes[i + 1] << 8);
      if (b === prev) continue;
      const d = b ^ prev;
      if ((d & hm) !== 0) break;
      if ((d & cm) !== 0 && (b & cm) === active) {
        this.putAll(prev, base + i / width, n);
        n++;
        if (n >= BIT_CHUNK_SIZE) {
          prev = b;
          i += width;
          break;
        }
      }
      prev = b;
    }
    this.prev = prev;
    return i;
  }

  /** one bit on every link, taken from sample `level` at sample index s; n is the bit count before it */
  private putAll(level: number, s: number, n: number): void {
    for (let k = 0; k < this.links; k++) {
      const c = this.chunks[k];
      const l = (level >> this.dataBit[k]) & 1;
      const bit = this.nrzi ? 1 ^ l ^ this.ref[k] : l ^ this.flip;
      this.ref[k] = l;
      let a = this.acc[k] | (bit << (n & 7));
      c.samples[n] = s;
      if ((n & 7) === 7) {
        c.packed![n >> 3] = a;
        a = 0;
      }
      this.acc[k] = a;
      c.n = n + 1;
    }
  }

  /**
   * A sample where a handshake line changed: its channels are taken in index order, as the
   * general path's reader lists them, so bits and events keep the same order.
   */
  private handshakeSample(b: number, s: number): void {
    const prev = this.prev;
    let d = b ^ prev;
    while (d !== 0) {
      const low = d & -d;
      const c = 31 - Math.clz32(low);
      d ^= low;
      if (c === this.clockChannel) {
        if ((b & this.clockMask) === this.clockActive) {
          this.putAll(prev, s, this.chunks[0].n);
          if (this.chunks[0].n >= BIT_CHUNK_SIZE) this.flushAll();
        }
      } else if ((this.handshakeMask & low) !== 0) {
        for (const h of this.handshake) {
          if (h.channel !== c) continue;
          this.flushAll();
          this.sink.event({ link: h.link, channel: h.name, kind: (b >> c) & 1 ? 'rise' : 'fall', sample: s });
        }
      }
    }
    this.prev = b;
  }

  private flushAll(): void {
    for (let k = 0; k < this.links; k++) {
      const c = this.chunks[k];
      if (c.n === 0) continue;
      // the partial byte goes along; the count says how much of it is valid
      if ((c.n & 7) !== 0) c.packed![c.n >> 3] = this.acc[k];
      this.sink.bits(this.names[k], c);
      c.n = 0;
      this.acc[k] = 0;
    }
  }

  finish(): void {
    this.flushAll();
  }
}
