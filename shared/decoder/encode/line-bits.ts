// The reverse of the deframer: frames → line bits as an HDLC transmitter sends them (ISO/IEC
// 13239): octets LSB first, FCS appended low-order octet first, a 0 inserted after every five
// 1s between the flags, flags 01111110 around frames. Faults can be injected so tests and
// benchmarks can check every frame status.
import { fcs16, fcs32 } from '../fcs';

export interface FrameFaults {
  /** destuffed bit indices (from the first address bit, FCS included) flipped after the FCS is computed */
  flipBits?: number[];
  /** send an abort (seven 1s) after this many destuffed bits instead of the rest of the frame */
  abortAfterBits?: number;
  /**
   * how many 1s the abort sends (default 7, the fewest ISO/IEC 13239 counts as an abort; a
   * transmitter that runs dry may keep sending 1s until it is fed again, and fifteen or more
   * read as an idle line)
   */
  abortOnes?: number;
  /** send an FCS that does not match (the correct one with every bit inverted) */
  wrongFcs?: boolean;
  /** extra bits after the FCS, giving a bit count that is not a multiple of 8 */
  residueBits?: number;
  /** leave out the closing flag (the next item follows the last frame bit directly) */
  noClosingFlag?: boolean;
  /** leave out the FCS (e.g. to build short frames) */
  noFcs?: boolean;
}

export type LineItem =
  /** fill flags; sharedZero lets consecutive flags share their 0 (011111101111110) */
  | { kind: 'flags'; count: number; sharedZero?: boolean }
  /** idle line: this many 1s */
  | { kind: 'idle'; count: number }
  /** line bits sent as they are (no stuffing), e.g. noise before the first flag */
  | { kind: 'raw'; bits: ArrayLike<number> }
  /**
   * A frame: address, control and information octets. The FCS is appended by the encoder.
   * With sharedFlag, the flag that ended the previous item (if any) also opens this frame.
   */
  | { kind: 'frame'; bytes: Uint8Array; faults?: FrameFaults; sharedFlag?: boolean };

export interface EncodedFrame {
  /** line-bit index of the first bit after the opening flag */
  startBit: number;
  /** line-bit index one past the last bit before the closing flag or abort */
  endBit: number;
  /**
   * line-bit index of the frame's last data bit: endBit - 1, or endBit - 2 when the transmitter
   * stuffed a 0 after the last bit (its last five bits were 1s); a receiver's frame ends here
   */
  lastBit: number;
  /** positions of the inserted zeros, counted from startBit */
  stuffedPositions: number[];
  /** octets between the flags as a receiver should assemble them (FCS included, faults applied) */
  wire: Uint8Array;
  /** destuffed bit count between the flags */
  bitLength: number;
}

export interface LineBits {
  /** one line bit per element (0/1), before any NRZI coding */
  bits: Uint8Array;
  frames: EncodedFrame[];
}

export interface EncodeOptions {
  fcs?: 16 | 32;
}

class BitWriter {
  bits = new Uint8Array(1024);
  n = 0;
  push(b: number): void {
    if (this.n === this.bits.length) {
      const next = new Uint8Array(this.bits.length * 2);
      next.set(this.bits);
      this.bits = next;
    }
    this.bits[this.n++] = b;
  }
  flag(shareZero: boolean): void {
    if (!shareZero) this.push(0);
    for (let i = 0; i < 6; i++) this.push(1);
    this.push(0);
  }
  /** true when the bits so far end in a complete flag */
  endsInFlag(): boolean {
    const n = this.n;
    if (n < 8) return false;
    const b = this.bits;
    return b[n - 8] === 0 && b[n - 7] && b[n - 6] && b[n - 5] && b[n - 4] && b[n - 3] && b[n - 2] && b[n - 1] === 0 ? true : false;
  }
}

/** Destuffed bits of a frame body (data + FCS + residue), LSB first, faults applied. */
function frameBits(bytes: Uint8Array, faults: FrameFaults, fcsWidth: 16 | 32): { bits: Uint8Array; wire: Uint8Array } {
  const fcsOctets = faults.noFcs ? 0 : fcsWidth / 8;
  const wire = new Uint8Array(bytes.length + fcsOctets);
  wire.set(bytes);
  if (fcsOctets) {
    let f = fcsWidth === 16 ? fcs16(bytes) : fcs32(bytes);
    if (faults.wrongFcs) f = fcsWidth === 16 ? f ^ 0xffff : ~f >>> 0;
    for (let k = 0; k < fcsOctets; k++) wire[bytes.length + k] = (f >>> (8 * k)) & 0xff;
  }
  const residue = faults.residueBits ?? 0;
  const bits = new Uint8Array(wire.length * 8 + residue);
  for (let i = 0; i < wire.length * 8; i++) bits[i] = (wire[i >> 3] >> (i & 7)) & 1;
  // Residue bits alternate so they never form flags or stuffing on their own.
  for (let r = 0; r < residue; r++) bits[wire.length * 8 + r] = r & 1;
  for (const i of faults.flipBits ?? []) {
    if (i < 0 || i >= bits.length) throw new RangeError(`flip index ${i} outside the frame's ${bits.length} bits`);
    bits[i] ^= 1;
    if (i < wire.length * 8) wire[i >> 3] ^= 1 << (i & 7);
  }
  return { bits, wire };
}

export function encodeLineBits(items: LineItem[], options: EncodeOptions = {}): LineBits {
  const fcsWidth = options.fcs ?? 16;
  const w = new BitWriter();
  const frames: EncodedFrame[] = [];
  for (const item of items) {
    if (item.kind === 'flags') {
      for (let k = 0; k < item.count; k++) w.flag(item.sharedZero === true && w.endsInFlag());
    } else if (item.kind === 'idle') {
      for (let k = 0; k < item.count; k++) w.push(1);
    } else if (item.kind === 'raw') {
      for (let k = 0; k < item.bits.length; k++) w.push(item.bits[k] ? 1 : 0);
    } else {
      const faults = item.faults ?? {};
      if (!(item.sharedFlag && w.endsInFlag())) w.flag(false);
      const { bits, wire } = frameBits(item.bytes, faults, fcsWidth);
      const startBit = w.n;
      const stuffedPositions: number[] = [];
      const stop = faults.abortAfterBits !== undefined ? Math.min(faults.abortAfterBits, bits.length) : bits.length;
      let ones = 0;
      for (let i = 0; i < stop; i++) {
        const b = bits[i];
        w.push(b);
        if (b) {
          if (++ones === 5) {
            stuffedPositions.push(w.n - startBit);
            w.push(0);
            ones = 0;
          }
        } else ones = 0;
      }
      const endBit = w.n;
      const lastBit = stuffedPositions.length > 0 && stuffedPositions[stuffedPositions.length - 1] === endBit - startBit - 1 ? endBit - 2 : endBit - 1;
      if (faults.abortAfterBits !== undefined) {
        const ones = faults.abortOnes ?? 7;
        if (ones < 7) throw new RangeError(`an abort is seven or more 1s, not ${ones}`);
        for (let k = 0; k < ones; k++) w.push(1);
      } else if (!faults.noClosingFlag) {
        w.flag(false);
      }
      frames.push({ startBit, endBit, lastBit, stuffedPositions, wire, bitLength: stop });
    }
  }
  return { bits: w.bits.slice(0, w.n), frames };
}

/**
 * Line bits between the flags of one frame as encodeLineBits sends it (zero-bit insertion
 * counted, an abort's 1s not): for placing frames without encoding the whole line.
 */
export function frameLineLength(bytes: Uint8Array, faults: FrameFaults = {}, fcs: 16 | 32 = 16): number {
  return frameLineSpan(bytes, faults, fcs).length;
}

/**
 * Line bits a frame takes between its flags after zero-bit insertion, and the offset of its last
 * data bit in them (length - 1, or length - 2 when a 0 was stuffed after the last bit).
 */
export function frameLineSpan(bytes: Uint8Array, faults: FrameFaults = {}, fcs: 16 | 32 = 16): { length: number; last: number } {
  let octets: Uint8Array;
  let total: number;
  if (faults.flipBits?.length || faults.residueBits || faults.wrongFcs || faults.noFcs) {
    const { bits } = frameBits(bytes, faults, fcs);
    octets = packLineBits(bits);
    total = bits.length;
  } else {
    // the common case: the octets then the FCS, low-order octet first
    const f = fcs === 16 ? fcs16(bytes) : fcs32(bytes);
    octets = new Uint8Array(bytes.length + fcs / 8);
    octets.set(bytes);
    for (let k = 0; k < fcs / 8; k++) octets[bytes.length + k] = (f >>> (8 * k)) & 0xff;
    total = octets.length * 8;
  }
  return stuffedSpan(octets, faults.abortAfterBits !== undefined ? Math.min(faults.abortAfterBits, total) : total);
}

/** the first `stop` bits of `octets` (LSB first) plus the 0 inserted after every five 1s among them */
function stuffedSpan(octets: Uint8Array, stop: number): { length: number; last: number } {
  let n = stop;
  let ones = 0;
  let trailingZero = false;
  for (let i = 0; i < stop; i++) {
    if ((octets[i >> 3] >> (i & 7)) & 1) {
      if (++ones === 5) {
        n++;
        ones = 0;
        trailingZero = i === stop - 1;
      }
    } else ones = 0;
  }
  return { length: n, last: n - (trailingZero ? 2 : 1) };
}

/** Packs line bits into octets LSB first (the octet-stream capture format). */
export function packLineBits(bits: Uint8Array): Uint8Array {
  const out = new Uint8Array(Math.ceil(bits.length / 8));
  for (let i = 0; i < bits.length; i++) out[i >> 3] |= (bits[i] & 1) << (i & 7);
  return out;
}

// ---- seeded randomness for property tests and benchmarks ----

/** mulberry32: a small seeded PRNG returning floats in [0, 1). */
export function seededRng(seed: number): () => number {
  let a = seed >>> 0;
  return () => {
    a = (a + 0x6d2b79f5) >>> 0;
    let t = a;
    t = Math.imul(t ^ (t >>> 15), t | 1);
    t ^= t + Math.imul(t ^ (t >>> 7), t | 61);
    return ((t ^ (t >>> 14)) >>> 0) / 4294967296;
  };
}

/**
 * A random frame (address, control, information) of 2..maxLength octets. Octets full of 1s are
 * favoured so stuffing, flag-like and abort-like patterns occur often.
 */
export function randomFrame(rng: () => number, maxLength = 64): Uint8Array {
  const length = 2 + Math.floor(rng() * (maxLength - 1));
  const out = new Uint8Array(length);
  for (let i = 0; i < length; i++) {
    const r = rng();
    out[i] = r < 0.15 ? 0xff : r < 0.25 ? 0x7e : r < 0.3 ? 0x3f : r < 0.35 ? 0xfc : Math.floor(rng() * 256);
  }
  return out;
}
