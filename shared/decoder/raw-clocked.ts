import type { AnomalyTap } from './faults/anomalies';
import { BIT_CHUNK_SIZE as CHUNK } from './link-bits';
import type { BitChunk, BitRecoveryOptions, BitRecoverySink } from './types';

/** module-local copy: imported bindings cost a lookup in hot loops */
const BIT_CHUNK_SIZE = CHUNK;
/** samples scanned per call while an anomaly tap listens: the stretch the tap takes at once */
const TAP_SLICE = 65536;
/**
 * The first scans take at most this many samples each (WARM_SCANS of them): the scan loops are then
 * compiled once, with every path through them already run, instead of being compiled on the fly in
 * the first long scan (on-stack replacement) and again after each exit they had not yet seen.
 */
const WARM_SLICE = 2048;
const WARM_SCANS = 64;
/** the largest gap (in samples) the screen's bit history covers: 4 new samples and 12 before them, 2 lines */
const PAIR_GAP = 12;

/** Σ 2^(s - 6i) for i = 0…3: moves bit 8i + d of a word to s - 6i + 8i + d (see screenPairs) */
function gatherMultiplier(s: number): number {
  let m = 0;
  for (let i = 0; i < 4; i++) m |= 1 << (s - 6 * i);
  return m;
}

/**
 * Raw binary samples with a clock channel, straight to packed line bits: one pass over the
 * bytes, no Transitions in between. Gives exactly what RawReader → BitRecovery gives (tested
 * against it): a bit per link on each clock edge, taking the data level of the sample before
 * the edge (data changing at the very sample of the edge counts as changing after it), NRZI
 * against the line's initial level, inversion on the line level, handshake lines as events.
 *
 * Sample indices stay exact per bit (a clock may jitter), written beside the packed bits.
 *
 * With an anomaly tap (the fault desk) the samples go in stretches of TAP_SLICE. After the bits of
 * a stretch, a second pass (the screen) keeps each data line's last change and marks the stretch
 * suspect when a change comes sooner after the previous one than the tap allows (a possible
 * glitch). A stretch that is not suspect and whose clock edges (the bits' sample indices) the tap
 * finds on time goes to the tap in one step (AnomalyTap.quiet); any other is scanned again for
 * every data-line change and fed to the tap change by change (AnomalyTap.edges). Either way the
 * tap reports what it would from the general path's transitions.
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
  /** scans still to be kept to WARM_SLICE samples */
  private warm = WARM_SCANS;

  // ---- the anomaly tap's feed (see the class comment) ----
  /** data lines whose changes are looked at (0 without a tap) */
  private readonly changeMask: number;
  /** per link: its data line's bit, repeated in each byte of a 32-bit word (four 1-byte samples) */
  private readonly laneMask: Int32Array;
  /** per link: sample of its data line's last change */
  private readonly lastChange: Float64Array;
  /** a change this soon after the line's last one makes the stretch suspect */
  private screen = Infinity;
  /** every data-line change (channel, sample) of a stretch fed change by change */
  private readonly changeChannel: Uint8Array;
  private readonly changeSample: Float64Array;
  private changes = 0;
  /** the first bit whose clock edge the tap has not had yet */
  private tapFrom = 0;

  constructor(
    opts: BitRecoveryOptions,
    private readonly sink: BitRecoverySink,
    private readonly tap: AnomalyTap | null = null,
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
    let dm = 0;
    for (const d of opts.data) dm |= 1 << d.channel;
    this.changeMask = tap ? dm : 0;
    this.laneMask = Int32Array.from(opts.data.map((d) => (1 << d.channel) * 0x01010101));
    this.lastChange = new Float64Array(this.links);
    // at most one change per data line and sample
    const room = tap ? (TAP_SLICE + 1) * this.links : 0;
    this.changeChannel = new Uint8Array(room);
    this.changeSample = new Float64Array(room);
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
      if (this.tap) this.firstLevels(first, firstSample);
      i += width;
    }
    const tap = this.tap;
    while (i < end) {
      let stop = tap ? Math.min(end, i + TAP_SLICE * width) : end;
      if (this.warm > 0) {
        this.warm--;
        stop = Math.min(stop, i + WARM_SLICE * width);
      }
      const from = i;
      const prevBefore = this.prev;
      i = width === 1 ? this.scan8(bytes, i, stop, base) : this.scan16(bytes, i, stop, base);
      if (tap) this.tapStretch(bytes, from, i, base, width, prevBefore);
      if (this.chunks[0].n >= BIT_CHUNK_SIZE) this.flushAll();
      else if (i < stop) {
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
    // the tap takes this sample change by change
    if (this.tap) this.recordChanges(b ^ prev, s);
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
    if (this.tap) this.feedTap();
  }

  /**
   * The screen, a pass of its own over samples bytes[from, to) just scanned (still in cache; the
   * bit loop stays as lean as without a tap): keeps each data line's last change and says whether
   * the stretch is suspect, a line changing sooner than `screen` after its previous change or
   * twice within four samples. It stops at the first suspect change: the stretch is then fed
   * change by change, which sets the last changes again.
   */
  private screenStretch(bytes: Uint8Array, from: number, to: number, base: number, width: 1 | 2, prevBefore: number): boolean {
    const mask = this.changeMask;
    let prev = prevBefore;
    if (width === 2) {
      for (let i = from; i < to; i += 2) {
        const v = bytes[i] | (bytes[i + 1] << 8);
        const d = (v ^ prev) & mask;
        prev = v;
        if (d !== 0 && this.screenChange(d, base + i / 2, false)) return true;
      }
      return false;
    }
    // single samples up to a 4-byte boundary, whole words (four samples), then the rest
    const head = Math.min(to, from + ((4 - ((bytes.byteOffset + from) & 3)) & 3));
    const count = (to - head) >> 2;
    prev = this.screenBytes(bytes, from, head, base, prev);
    if (prev < 0) return true;
    const gap = Math.ceil(this.screen) - 1;
    if (count > 0 && this.links <= 2 && gap >= 1 && gap <= PAIR_GAP) {
      const words = new Int32Array(bytes.buffer, bytes.byteOffset + head, count);
      if (this.screenPairs(words, base + head, prev, gap)) return true;
      prev = words[count - 1] >>> 24;
    } else if (count > 0 && this.links <= 2) {
      // one or two lines, their state in locals: screenChange written out
      const words = new Int32Array(bytes.buffer, bytes.byteOffset + head, count);
      const lanes = mask * 0x01010101;
      const lane0 = this.laneMask[0];
      const lane1 = this.links === 2 ? this.laneMask[1] : 0;
      const screen = this.screen;
      const at0 = base + head;
      let last0 = this.lastChange[0];
      let last1 = this.links === 2 ? this.lastChange[1] : 0;
      let suspect = false;
      for (let j = 0; j < count; j++) {
        const w = words[j];
        // byte k of (w << 8) | prev is the sample before byte k of w
        const d = (w ^ ((w << 8) | prev)) & lanes;
        prev = w >>> 24;
        if (d === 0) continue;
        const x0 = d & lane0;
        if (x0 !== 0) {
          const at = at0 + 4 * j + ((31 - Math.clz32(x0)) >> 3);
          if ((x0 & (x0 - 1)) !== 0 || at - last0 < screen) {
            suspect = true;
            break;
          }
          last0 = at;
        }
        const x1 = d & lane1;
        if (x1 !== 0) {
          const at = at0 + 4 * j + ((31 - Math.clz32(x1)) >> 3);
          if ((x1 & (x1 - 1)) !== 0 || at - last1 < screen) {
            suspect = true;
            break;
          }
          last1 = at;
        }
      }
      this.lastChange[0] = last0;
      if (this.links === 2) this.lastChange[1] = last1;
      if (suspect) return true;
    } else if (count > 0) {
      const words = new Int32Array(bytes.buffer, bytes.byteOffset + head, count);
      const lanes = mask * 0x01010101;
      for (let j = 0; j < count; j++) {
        const w = words[j];
        const d = (w ^ ((w << 8) | prev)) & lanes;
        prev = w >>> 24;
        if (d !== 0 && this.screenChange(d, base + head + 4 * j, true)) return true;
      }
    }
    return this.screenBytes(bytes, head + 4 * count, to, base, prev) < 0;
  }

  /**
   * The screen over whole words (four 1-byte samples each, the first at sample at0) of one or two
   * lines, without a branch per change: a change is suspect when it comes at most `gap` samples
   * after the line's previous one (gap = ⌈screen⌉ - 1: sample indices are whole).
   *
   * The changes go into a bit history `h`, newest at the top: line k's change p samples before the
   * newest sample sets bit base_k + 6 - 2p (base_k 24 or 25, so the lines take alternate bits).
   * h · (4 + 4² + … + 4^gap) adds to each change a run over the positions of the `gap` samples after
   * it on its own line. While no two changes of a line are within `gap`, those runs neither overlap
   * nor carry, and no change lies in one: h & that product is 0. When some are, the lowest change
   * with an earlier one within `gap` has no overlap or carry below it, so its own bit is set in the
   * product: h & product is not 0. One multiply per word decides, whatever `gap` is.
   * True when suspect; else the lines' last changes are set, as the change-by-change screen sets them.
   */
  private screenPairs(words: Int32Array, at0: number, prevBefore: number, gap: number): boolean {
    let near = 0;
    for (let j = 1; j <= gap; j++) near |= 1 << (2 * j);
    // per line: its change bits (bit d of each byte) and the multiplier that gathers sample i of
    // the word to bit base + 2i, shifting bit 8i + d by base - 6i - d (never below 0: a line on
    // bit 7 takes base 25); the products' other terms stay below bit 24 and do not carry
    const two = this.links === 2;
    const d0 = this.dataBit[0];
    const d1 = two ? this.dataBit[1] : 0;
    const base0 = d0 === 7 ? 25 : 24;
    const base1 = 49 - base0;
    const lane0 = 0x01010101 << d0;
    const lane1 = two ? 0x01010101 << d1 : 0;
    const gather0 = gatherMultiplier(base0 - d0);
    const gather1 = two ? gatherMultiplier(base1 - d1) : 0;
    let h = 0;
    for (let k = 0; k < this.links; k++) {
      // the last change before the first word, where it can be within `gap` of it
      const p = at0 - 1 - this.lastChange[k];
      if (p >= 0 && p <= 11) h |= 1 << ((k === 0 ? base0 : base1) + 6 - 2 * p);
    }
    let prev = prevBefore;
    const count = words.length;
    for (let j = 0; j < count; j++) {
      const w = words[j];
      // byte k of (w << 8) | prev is the sample before byte k of w
      const d = w ^ ((w << 8) | prev);
      prev = w >>> 24;
      h = (h >>> 8) | ((Math.imul(d & lane0, gather0) | Math.imul(d & lane1, gather1)) & -0x1000000);
      if ((h & Math.imul(h, near)) !== 0) return true;
    }
    // each line's last change: the last word with one, its latest sample
    for (let k = 0; k < this.links; k++) {
      const bit = this.dataBit[k];
      for (let j = count - 1; j >= 0; j--) {
        const w = words[j];
        const x = ((w ^ ((w << 8) | (j > 0 ? words[j - 1] >>> 24 : prevBefore))) >>> bit) & 0x01010101;
        if (x === 0) continue;
        this.lastChange[k] = at0 + 4 * j + ((31 - Math.clz32(x)) >> 3);
        break;
      }
    }
    return false;
  }

  /** the screen over 1-byte samples bytes[from, to) one at a time; the last sample, or -1 when suspect */
  private screenBytes(bytes: Uint8Array, from: number, to: number, base: number, prev: number): number {
    for (let i = from; i < to; i++) {
      const d = (bytes[i] ^ prev) & this.changeMask;
      prev = bytes[i];
      if (d !== 0 && this.screenChange(d, base + i, false)) return -1;
    }
    return prev;
  }

  /** one change mask, of four 1-byte samples from sample s (`lanes`) or of one sample at s: true when it makes the stretch suspect */
  private screenChange(d: number, s: number, lanes: boolean): boolean {
    for (let k = 0; k < this.links; k++) {
      const x = d & (lanes ? this.laneMask[k] : 1 << this.dataBit[k]);
      if (x === 0) continue;
      const at = lanes ? s + ((31 - Math.clz32(x)) >> 3) : s;
      if ((x & (x - 1)) !== 0 || at - this.lastChange[k] < this.screen) return true;
      this.lastChange[k] = at;
    }
    return false;
  }

  /** the first sample's levels of the clock and data lines, as the general path's reader gives them */
  private firstLevels(first: number, s: number): void {
    const channels = [this.clockChannel, ...this.dataBit].sort((a, b) => a - b);
    this.tap!.transitions({
      channel: Uint8Array.from(channels),
      sample: new Float64Array(channels.length).fill(s),
      value: Uint8Array.from(channels.map((c) => (first >> c) & 1)),
      n: channels.length,
    });
    this.lastChange.fill(s);
  }

  /**
   * Samples bytes[from, to) were scanned: the tap takes them in one step when nothing in them can
   * be an anomaly, else change by change (found by scanning them again, from `prevBefore`).
   */
  private tapStretch(bytes: Uint8Array, from: number, to: number, base: number, width: 1 | 2, prevBefore: number): void {
    const n = this.chunks[0].n;
    const tap = this.tap!;
    this.screen = tap.quietScreen();
    const suspect = this.screenStretch(bytes, from, to, base, width, prevBefore);
    if (!suspect && tap.quiet(this.chunks[0].samples, this.tapFrom, n, this.screen, this.dataBit, this.lastChange)) {
      this.tapFrom = n;
      return;
    }
    this.recordStretch(bytes, from, to, base, width, prevBefore);
    this.feedTap();
  }

  /**
   * Every data-line change in samples bytes[from, to), for feedTap. (A method of its own: its loop
   * is compiled on its own, so the compiled loop never ends in a call it has not seen yet.)
   */
  private recordStretch(bytes: Uint8Array, from: number, to: number, base: number, width: 1 | 2, prevBefore: number): void {
    const mask = this.changeMask;
    let prev = prevBefore;
    for (let i = from; i < to; i += width) {
      const v = width === 1 ? bytes[i] : bytes[i] | (bytes[i + 1] << 8);
      if (((v ^ prev) & mask) !== 0) this.recordChanges(v ^ prev, base + i / width);
      prev = v;
    }
  }

  /** keeps the data-line changes in `d` (a change mask of one sample at s) for feedTap */
  private recordChanges(d: number, s: number): void {
    let x = d & this.changeMask;
    while (x !== 0) {
      const bit = x & -x;
      x ^= bit;
      this.changeChannel[this.changes] = 31 - Math.clz32(bit);
      this.changeSample[this.changes] = s;
      this.changes++;
    }
    for (let k = 0; k < this.links; k++) if ((d >> this.dataBit[k]) & 1) this.lastChange[k] = s;
  }

  /** gives the tap the clock edges and the kept data-line changes it has not had yet, change by change */
  private feedTap(): void {
    const n = this.chunks[0].n;
    this.tap!.edges(this.chunks[0].samples, this.tapFrom, n, this.changeChannel, this.changeSample, this.changes);
    this.tapFrom = n;
    this.changes = 0;
  }

  private flushAll(): void {
    if (this.tap) {
      this.feedTap();
      this.tapFrom = 0;
    }
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
