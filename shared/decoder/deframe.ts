// Deframing of one link's line bits (ISO/IEC 13239): flag 01111110, deletion of the 0 a
// transmitter inserts after five 1s, abort (seven or more 1s inside a frame), idle (fifteen or
// more 1s), shared flags and residue bits.
//
// Rules this deframer applies:
// - A flag is a run of exactly six 1s with a 0 on each side. The closing 0 of one flag may also
//   be the opening 0 of the next (011111101111110, "shared zero"), which some controllers send
//   between fill flags (from memory). A receiver matching the pattern in a sliding window sees
//   two flags there, so we count two flags and no frame between them; the alternative (one flag
//   then a 7-bit frame) would turn every such stretch into a 'short' frame.
// - One flag may close a frame and open the next (shared flag).
// - The bits of a frame are those after the opening flag's last 0 and before the closing flag's
//   first 0. A 0 after five 1s is deleted and its line position recorded in `stuffed`.
// - Abort: the seventh 1 in a row ends the frame. The 1s before it cannot be told apart from the
//   abort itself, so an aborted frame keeps the bits up to its last 0 (common practice).
// - A stretch of flags with nothing between them is one 'flags' line event (count = flags in the
//   stretch, including the one closing the previous frame and the one opening the next), reported
//   when at least two flags are adjacent. A run of fifteen or more 1s is one 'idle' line event.
// - A frame cut off by the end of the input, or growing past maxFrameOctets (a line stuck in
//   data, e.g. held at 0), is reported as 'abort' when it holds at least one octet; fewer bits are
//   the start of a flag and are dropped.
// Line events are reported when their stretch ends (a stretch ends before the next frame of the
// same link starts), so across links they may lag behind frames; the pipeline orders by sample.
//
// Speed: line bits are taken packed, eight at a time, through tables built once (see FAST): inside
// a frame, eight line bits without a sixth 1 in a row go in as their data bits in one step, with
// any stuffed 0s deleted. Other bits go one at a time through a loop on locals, and the rare ones
// (flags, aborts, idle, a full buffer) through slowBit(), the rules above on the state in `this`.
// One-bit-per-element chunks are packed first; `bitwise` sends every bit through slowBit(), the
// plain reference both loops are tested against (tests/decoder/fast-path-deframe.test.ts).
import type { BitChunk, FrameStatus, LineEvent, RawFrame } from './types';

export interface DeframerSink {
  frame(f: RawFrame): void;
  event(e: LineEvent): void;
}

export interface DeframerOptions {
  /** fewer whole octets than this make a frame 'short': address + control + FCS (4 for FCS-16) */
  minOctets?: number;
  /** longest frame kept; longer ones are closed as 'abort' */
  maxFrameOctets?: number;
  /**
   * Take every line bit one at a time by the plain rules (slowBit), never through the tables or
   * the loop on locals: the reference those are tested against.
   */
  bitwise?: boolean;
  /**
   * Frames' octets may share one ArrayBuffer (views into blocks of SHARED_BLOCK bytes, each
   * written once): no buffer allocated and swept per frame. For a consumer that lets go of frames
   * soon after it gets them (the decode CLI); one that keeps a few frames of many would keep
   * their whole blocks alive, so the default is a buffer per frame.
   */
  sharedBytes?: boolean;
  /** false: no line events are made (a consumer that drops them); frames are the same either way */
  events?: boolean;
}

/** octets per shared block of frame bytes (DeframerOptions.sharedBytes) */
const SHARED_BLOCK = 1 << 16;

/**
 * Byte-at-a-time tables, built once: for a run of `o` 1s already seen (0–5) and the next eight
 * line bits (first bit in bit 0), FAST[o * 256 + byte] is 0 when a sixth 1 in a row occurs in them
 * (a flag or abort may follow: the bit-at-a-time path takes those), else
 *   bits 0–7   the data bits left after deleting stuffed 0s, first in bit 0
 *   bits 8–11  how many (6–8; at most two 0s can be stuffed in eight bits)
 *   bits 12–15 the 1s the eight bits end with
 *   bits 16–18 position of their last 0 (there always is one)
 *   bits 19–22 data bits before that 0
 *   bit  23    that 0 is a stuffed one
 * STUFFED[o * 256 + byte] holds the positions of the stuffed 0s, first in bits 0–3 and second in
 * bits 4–7, each plus one (0: none).
 */
const FAST = new Int32Array(6 * 256);
const STUFFED = new Uint8Array(6 * 256);
for (let o = 0; o < 6; o++) {
  for (let b = 0; b < 256; b++) {
    let ones = o;
    let data = 0;
    let count = 0;
    let lastZero = -1;
    let before = 0;
    let lastStuffed = 0;
    let stuffed = 0;
    let plain = true;
    for (let j = 0; j < 8 && plain; j++) {
      if ((b >> j) & 1) {
        if (++ones > 5) plain = false;
        else data |= 1 << count++;
      } else {
        lastZero = j;
        before = count;
        if (ones === 5) {
          lastStuffed = 1;
          stuffed = stuffed === 0 ? j + 1 : stuffed | ((j + 1) << 4);
        } else {
          lastStuffed = 0;
          count++;
        }
        ones = 0;
      }
    }
    if (!plain || lastZero < 0) continue;
    FAST[(o << 8) | b] = data | (count << 8) | (ones << 12) | (lastZero << 16) | (before << 19) | (lastStuffed << 23);
    STUFFED[(o << 8) | b] = stuffed;
  }
}

/**
 * Sample of the last data bit before the last 0 of a line byte taken whole (FAST entry `e`,
 * STUFFED entry `stuffed`, taken at `at`). When a stuffed 0 comes right before that 0 it is
 * skipped: a frame ends at its last data bit, not at the 0 its transmitter stuffed after it.
 */
function fastEndSample(samples: ArrayLike<number>, at: number, e: number, stuffed: number, prev: number): number {
  const z = (e >> 16) & 7;
  // z >= 2 always: at most five 1s follow the last 0 of a byte the table takes whole
  const lastStuffed = stuffed > 15 ? stuffed >> 4 : stuffed & 15; // position + 1
  if (lastStuffed === z) return samples[at + z - 2];
  return z > 0 ? samples[at + z - 1] : at > 0 ? samples[at - 1] : prev;
}

export class Deframer {
  private readonly minBits: number;
  private readonly maxOctets: number;
  private seq = 0;

  // Bit-level state (integers; see push()).
  private ones = 0;
  private runStart = 0;
  private seenZero = false;
  private inFrame = false;
  private len = 0;
  /** data bits of the octet being assembled */
  private acc = 0;
  private lineCount = 0;
  private firstSample = 0;
  private prevSample = -1;
  private zeroSample = 0;
  private lenBeforeZero = 0;
  private stuffedBeforeZero = 0;
  private sampleBeforeZero = 0;
  private buf: Uint8Array;
  /** line positions of the current frame's stuffed 0s; a frame gets its own copy (positions()) */
  private stuffedAt = new Int32Array(64);
  private stuffedCount = 0;
  private readonly bitwise: boolean;
  private readonly sharedBytes: boolean;
  private readonly events: boolean;
  /** the shared block frames' octets are copied into, and where the next frame's go */
  private block = new Uint8Array(0);
  private blockAt = 0;
  private scratch = new Uint8Array(1024);

  // The current stretch of adjacent flags.
  private stretchCount = 0;
  private stretchStart = 0;
  private stretchEnd = 0;

  /** line bits seen, for throughput */
  bitsSeen = 0;

  constructor(
    readonly link: string,
    private readonly sink: DeframerSink,
    options: DeframerOptions = {},
  ) {
    this.minBits = (options.minOctets ?? 4) * 8;
    this.maxOctets = Math.max(1, options.maxFrameOctets ?? 1 << 20);
    this.buf = new Uint8Array(Math.min(256, this.maxOctets));
    this.bitwise = options.bitwise ?? false;
    this.sharedBytes = options.sharedBytes ?? false;
    this.events = options.events ?? true;
  }

  /**
   * Earliest sample a frame or line event not yet emitted can carry: the open frame's first bit,
   * the start of an open stretch of flags or run of 1s, or past the last bit seen. Used to merge links in time order.
   */
  pendingFrom(): number {
    let w = this.prevSample + 0.5;
    if (this.inFrame && this.lineCount > 0) w = Math.min(w, this.firstSample);
    // line events go out when their stretch ends but carry its start: an open stretch of flags
    // or a run of 1s (a possible idle) holds back what comes after its start
    if (this.stretchCount > 0) w = Math.min(w, this.stretchStart);
    if (this.ones > 0) w = Math.min(w, this.runStart);
    return w;
  }

  push(chunk: BitChunk): void {
    this.pushPacked(chunk, chunk.packed ?? this.pack(chunk));
  }

  /** packs a one-bit-per-element chunk into the scratch buffer (LSB first) */
  private pack(chunk: BitChunk): Uint8Array {
    const n = chunk.n;
    const bytes = (n + 7) >> 3;
    if (this.scratch.length < bytes) this.scratch = new Uint8Array(Math.max(bytes, this.scratch.length * 2));
    const out = this.scratch;
    const bits = chunk.bits;
    const whole = n >> 3;
    for (let j = 0, i = 0; j < whole; j++, i += 8) {
      out[j] =
        (bits[i] & 1) |
        ((bits[i + 1] & 1) << 1) |
        ((bits[i + 2] & 1) << 2) |
        ((bits[i + 3] & 1) << 3) |
        ((bits[i + 4] & 1) << 4) |
        ((bits[i + 5] & 1) << 5) |
        ((bits[i + 6] & 1) << 6) |
        ((bits[i + 7] & 1) << 7);
    }
    if (whole < bytes) {
      let last = 0;
      for (let i = whole * 8; i < n; i++) last |= (bits[i] & 1) << (i & 7);
      out[whole] = last;
    }
    return out;
  }

  /**
   * Packed line bits. The common bits run on locals in the loop below; inside a frame, a whole line
   * byte without a sixth 1 in a row goes in at once through the tables (unless `bitwise`). A bit
   * that needs one of the rare steps (a flag, an abort, idle, a frame outgrowing its buffer) ends
   * the loop before it changes anything: the locals go back to `this`, slowBit() takes that one bit
   * by the plain rules, and the loop starts again from `this`. So the loop holds no call or
   * property access that only a rare bit reaches: the optimizing compiler sees all of it run from
   * the first chunk, and the first abort or idle line does not throw the compiled loop away
   * (each recompilation of this loop cost more CPU than thousands of frames). With `bitwise`,
   * every bit goes through slowBit(): the plain reference both loops are tested against.
   */
  private pushPacked(chunk: BitChunk, packed: Uint8Array): void {
    const samples = chunk.samples;
    const n = chunk.n;
    if (this.bitwise) {
      for (let i = 0; i < n; i++) this.slowBit((packed[i >> 3] >> (i & 7)) & 1, samples[i]);
      this.bitsSeen += n;
      return;
    }
    let i = 0;
    for (;;) {
      // Locals only in the loop (no closures: captured locals would live on the heap). Data bits
      // gather in `acc` and reach the buffer a whole octet at a time.
      let ones = this.ones;
      // only slowBit() opens or closes a frame
      const inFrame = this.inFrame;
      let len = this.len;
      let acc = this.acc;
      let lineCount = this.lineCount;
      let prev = this.prevSample;
      let runStart = this.runStart;
      let seenZero = this.seenZero;
      let zeroSample = this.zeroSample;
      let lenBeforeZero = this.lenBeforeZero;
      let sampleBeforeZero = this.sampleBeforeZero;
      let firstSample = this.firstSample;
      let stuffedBeforeZero = this.stuffedBeforeZero;
      const buf = this.buf;
      const room = buf.length;
      // the last byte taken whole, its table entry and the data length before it; -1 when none is pending
      let fastAt = -1;
      let fastE = 0;
      let fastLen = 0;
      let fastSt = 0;
      for (; i < n; i++) {
        if (inFrame && (i & 7) === 0 && ones < 6 && i + 8 <= n) {
          // whole line bytes without a flag or abort in them: their data bits go in a byte at a time,
          // in a loop of their own (a frame's body is almost all such bytes)
          const whole = n >> 3;
          let j = i >> 3;
          while (j < whole && len >> 3 < room) {
            const b = packed[j];
            const e = FAST[(ones << 8) | b];
            if (e === 0) break;
            const count = (e >> 8) & 15;
            if (lineCount === 0) firstSample = samples[j << 3];
            const st = STUFFED[(ones << 8) | b];
            if (st !== 0) {
              this.stuffedPush(lineCount + (st & 15) - 1);
              if (st > 15) this.stuffedPush(lineCount + (st >> 4) - 1);
            }
            lineCount += 8;
            // where the last 0 and the trailing 1s are is worked out once the run of such bytes ends
            fastE = e;
            fastSt = st;
            fastLen = len;
            const r = len & 7;
            acc |= (e & 0xff) << r;
            if (r + count >= 8) {
              buf[len >> 3] = acc;
              acc >>>= 8;
            }
            len += count;
            ones = (e >> 12) & 15;
            j++;
          }
          if (j > i >> 3) {
            fastAt = (j - 1) << 3;
            i = (j << 3) - 1;
            continue;
          }
        }
        if (fastAt >= 0) {
          const z = (fastE >> 16) & 7;
          const onesOut = (fastE >> 12) & 15;
          lenBeforeZero = fastLen + ((fastE >> 19) & 15);
          sampleBeforeZero = fastEndSample(samples, fastAt, fastE, fastSt, prev);
          stuffedBeforeZero = (fastE & 0x800000) !== 0 ? this.stuffedCount - 1 : this.stuffedCount;
          zeroSample = samples[fastAt + z];
          if (onesOut > 0) runStart = samples[fastAt + 8 - onesOut];
          prev = samples[fastAt + 7];
          seenZero = true;
          fastAt = -1;
        }
        const s = samples[i];
        if (((packed[i >> 3] >> (i & 7)) & 1) !== 0) {
          // the rare steps: an abort, or a data bit completing an octet the buffer has no room for
          // Stryker disable next-line all: leaving for slowBit() (the bit-at-a-time rules) more often changes speed only; leaving too seldom is killed
          if (inFrame && (ones === 6 || (ones < 5 && (len & 7) === 7 && len >> 3 >= room))) break;
          if (ones === 0) runStart = s;
          ones++;
          if (inFrame) {
            if (lineCount === 0) firstSample = s;
            lineCount++;
            if (ones <= 5) {
              acc |= 1 << (len & 7);
              if ((len & 7) === 7) {
                buf[len >> 3] = acc;
                acc = 0;
              }
              len++;
            }
          }
        } else {
          // the rare steps: a flag, the end of idle, or a data bit completing an octet the buffer has no room for
          // Stryker disable next-line all: leaving for slowBit() (the bit-at-a-time rules) more often changes speed only; leaving too seldom is killed
          if ((ones === 6 && seenZero) || ones >= 15 || (inFrame && ones !== 5 && (len & 7) === 7 && len >> 3 >= room)) break;
          if (inFrame) {
            if (lineCount === 0) firstSample = s;
            lenBeforeZero = len;
            // right after a stuffed 0 keep the sample it took: the frame's last data bit
            const st = this.stuffedCount;
            if (ones === 5 || st === 0 || this.stuffedAt[st - 1] !== lineCount - 1) sampleBeforeZero = prev;
            stuffedBeforeZero = st;
            if (ones === 5) {
              this.stuffedPush(lineCount);
            } else {
              if ((len & 7) === 7) {
                buf[len >> 3] = acc;
                acc = 0;
              }
              len++;
            }
            lineCount++;
          }
          zeroSample = s;
          seenZero = true;
          ones = 0;
        }
        prev = s;
      }
      // the same settling of a byte taken whole as at the top of the loop, written out twice on
      // purpose: as a function it would hand back eight locals, which the hot loop cannot afford
      if (fastAt >= 0) {
        const z = (fastE >> 16) & 7;
        const onesOut = (fastE >> 12) & 15;
        lenBeforeZero = fastLen + ((fastE >> 19) & 15);
        sampleBeforeZero = fastEndSample(samples, fastAt, fastE, fastSt, prev);
        stuffedBeforeZero = (fastE & 0x800000) !== 0 ? this.stuffedCount - 1 : this.stuffedCount;
        zeroSample = samples[fastAt + z];
        if (onesOut > 0) runStart = samples[fastAt + 8 - onesOut];
        prev = samples[fastAt + 7];
        seenZero = true;
      }
      this.ones = ones;
      this.len = len;
      this.acc = acc;
      this.lineCount = lineCount;
      this.prevSample = prev;
      this.runStart = runStart;
      this.seenZero = seenZero;
      this.zeroSample = zeroSample;
      this.lenBeforeZero = lenBeforeZero;
      this.sampleBeforeZero = sampleBeforeZero;
      this.firstSample = firstSample;
      this.stuffedBeforeZero = stuffedBeforeZero;
      if (i >= n) break;
      this.slowBit((packed[i >> 3] >> (i & 7)) & 1, samples[i]);
      i++;
    }
    this.bitsSeen += n;
  }

  /** One line bit by the plain rules above, on the state in `this`. */
  private slowBit(bit: number, s: number): void {
    if (bit !== 0) {
      if (this.ones === 0) this.runStart = s;
      this.ones++;
      if (this.inFrame) {
        if (this.lineCount === 0) this.firstSample = s;
        this.lineCount++;
        if (this.ones <= 5) {
          const len = this.len;
          this.acc |= 1 << (len & 7);
          if ((len & 7) === 7) {
            if (len >> 3 >= this.buf.length && !this.room()) {
              this.prevSample = s;
              return;
            }
            this.buf[len >> 3] = this.acc;
            this.acc = 0;
          }
          this.len = len + 1;
        } else if (this.ones === 7) {
          this.abort();
        }
      }
    } else {
      if (this.ones === 6 && this.seenZero) {
        this.flag(s);
      } else {
        if (this.ones >= 15) this.idle(this.prevSample);
        if (this.inFrame) {
          if (this.lineCount === 0) this.firstSample = s;
          const len = this.len;
          this.lenBeforeZero = len;
          // right after a stuffed 0 keep the sample it took: the frame's last data bit
          const st = this.stuffedCount;
          if (this.ones === 5 || st === 0 || this.stuffedAt[st - 1] !== this.lineCount - 1) this.sampleBeforeZero = this.prevSample;
          this.stuffedBeforeZero = st;
          if (this.ones === 5) {
            this.stuffedPush(this.lineCount);
          } else {
            if ((len & 7) === 7) {
              if (len >> 3 >= this.buf.length && !this.room()) {
                this.zeroSample = s;
                this.seenZero = true;
                this.ones = 0;
                this.prevSample = s;
                return;
              }
              this.buf[len >> 3] = this.acc;
              this.acc = 0;
            }
            this.len = len + 1;
          }
          this.lineCount++;
        }
        this.zeroSample = s;
      }
      this.seenZero = true;
      this.ones = 0;
    }
    this.prevSample = s;
  }

  /** Makes room for one more octet; false when the frame grew too long and was closed. */
  private room(): boolean {
    if (this.buf.length >= this.maxOctets) {
      this.overflow();
      return false;
    }
    this.grow();
    return true;
  }

  finish(): void {
    if (this.ones >= 15) this.idle(this.prevSample);
    this.closeStretch();
    if (this.inFrame) {
      // The 1s after the last 0 (at most five were kept) may be the start of a flag: keep the
      // bits up to the last 0, as for an abort.
      const len = this.len - Math.min(this.ones, 5);
      if (len >= 8) {
        this.len = len;
        this.emit('abort', this.ones > 0 ? this.zeroSample : this.prevSample);
      }
      this.inFrame = false;
      this.len = 0;
      this.acc = 0;
    }
    this.ones = 0;
  }

  // ---- rare paths ----

  private stuffedPush(lineBit: number): void {
    if (this.stuffedCount === this.stuffedAt.length) {
      const next = new Int32Array(this.stuffedAt.length * 2);
      next.set(this.stuffedAt);
      this.stuffedAt = next;
    }
    this.stuffedAt[this.stuffedCount++] = lineBit;
  }

  /** the stuffed positions so far as the frame's own list */
  private positions(): number[] {
    const n = this.stuffedCount;
    const list: number[] = new Array(n);
    for (let k = 0; k < n; k++) list[k] = this.stuffedAt[k];
    return list;
  }

  private grow(): void {
    const next = new Uint8Array(Math.min(this.buf.length * 2, this.maxOctets));
    next.set(this.buf);
    this.buf = next;
  }

  /** Called on the 0 that ends a run of exactly six 1s: a flag ends here. */
  private flag(s: number): void {
    // The flag's first 0 is the last 0 before this run; it sits at zeroSample.
    const flagStart = this.zeroSample;
    if (this.inFrame) {
      const len = this.lenBeforeZero;
      this.stuffedCount = this.stuffedBeforeZero;
      if (len > 0) {
        this.closeStretch();
        this.len = len;
        this.emit(this.classify(len), this.sampleBeforeZero);
        this.stretchCount = 1;
        this.stretchStart = flagStart;
      } else if (this.stretchCount === 0) {
        this.stretchCount = 1;
        this.stretchStart = flagStart;
      } else {
        this.stretchCount++;
      }
    } else {
      this.stretchCount = 1;
      this.stretchStart = flagStart;
    }
    this.stretchEnd = s;
    this.inFrame = true;
    this.len = 0;
    this.acc = 0;
    this.lineCount = 0;
    this.stuffedCount = 0;
    // This 0 may be the first 0 of the next flag (shared zero): the frame before it is empty.
    this.lenBeforeZero = 0;
    this.stuffedBeforeZero = 0;
    this.sampleBeforeZero = s;
    this.zeroSample = s;
    this.ones = 0;
  }

  /** Called on the seventh 1 in a row inside a frame. */
  private abort(): void {
    const len = this.len - 5;
    this.closeStretch();
    if (len > 0) {
      this.len = len;
      this.emit('abort', this.zeroSample);
    }
    this.inFrame = false;
    this.len = 0;
    this.acc = 0;
    this.lineCount = 0;
    this.stuffedCount = 0;
  }

  private overflow(): void {
    this.closeStretch();
    this.emit('abort', this.prevSample);
    this.inFrame = false;
    this.len = 0;
    this.acc = 0;
    this.lineCount = 0;
    this.stuffedCount = 0;
  }

  private idle(endSample: number): void {
    this.closeStretch();
    if (this.events) this.sink.event({ link: this.link, channel: this.link, kind: 'idle', sample: this.runStart, endSample });
  }

  private closeStretch(): void {
    if (this.stretchCount >= 2 && this.events) {
      this.sink.event({
        link: this.link,
        channel: this.link,
        kind: 'flags',
        sample: this.stretchStart,
        endSample: this.stretchEnd,
        count: this.stretchCount,
      });
    }
    this.stretchCount = 0;
  }

  private classify(len: number): FrameStatus {
    if (len < this.minBits) return 'short';
    if ((len & 7) !== 0) return 'residue';
    return 'ok';
  }

  /** the first `whole` octets of the frame buffer, copied into the shared block */
  private shared(whole: number): Uint8Array {
    if (this.blockAt + whole > this.block.length) {
      this.block = new Uint8Array(Math.max(SHARED_BLOCK, whole));
      this.blockAt = 0;
    }
    const block = this.block;
    const at = this.blockAt;
    const buf = this.buf;
    for (let k = 0; k < whole; k++) block[at + k] = buf[k];
    this.blockAt = at + whole;
    return block.subarray(at, at + whole);
  }

  private emit(status: FrameStatus, lastSample: number): void {
    const len = this.len;
    const whole = len >> 3;
    const f: RawFrame = {
      link: this.link,
      seq: this.seq++,
      firstSample: this.firstSample,
      lastSample,
      bytes: this.sharedBytes ? this.shared(whole) : this.buf.slice(0, whole),
      bitLength: len,
      stuffed: this.positions(),
      status,
    };
    this.sink.frame(f);
  }
}
