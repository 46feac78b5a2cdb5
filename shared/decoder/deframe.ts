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
  private stuffed: number[] = [];

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
  }

  /**
   * Earliest firstSample a frame not yet emitted can have: the open frame's first bit, or past the
   * last bit seen. Used to merge links in time order.
   */
  pendingFrom(): number {
    if (this.inFrame && this.lineCount > 0) return this.firstSample;
    return this.prevSample + 0.5;
  }

  push(chunk: BitChunk): void {
    const bits = chunk.bits;
    const samples = chunk.samples;
    const n = chunk.n;
    // Hot loop on locals only (no closures: captured locals would live on the heap). They are
    // written back to `this` before each rare call out (flag, abort, idle, buffer growth) and
    // read again after it. Data bits gather in `acc` and reach the buffer a whole octet at a time.
    let ones = this.ones;
    let inFrame = this.inFrame;
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
    for (let i = 0; i < n; i++) {
      const s = samples[i];
      if (bits[i] !== 0) {
        if (ones === 0) runStart = s;
        ones++;
        if (inFrame) {
          if (lineCount === 0) firstSample = s;
          lineCount++;
          if (ones <= 5) {
            acc |= 1 << (len & 7);
            if ((len & 7) === 7) {
              if (len >> 3 >= this.buf.length) {
                this.len = len;
                this.prevSample = prev;
                this.firstSample = firstSample;
                if (!this.room()) {
                  ({ inFrame, len, lineCount, acc } = this);
                  prev = s;
                  continue;
                }
              }
              this.buf[len >> 3] = acc;
              acc = 0;
            }
            len++;
          } else if (ones === 7) {
            this.len = len;
            this.lineCount = lineCount;
            this.zeroSample = zeroSample;
            this.firstSample = firstSample;
            this.prevSample = prev;
            this.abort();
            ({ inFrame, len, lineCount, acc } = this);
          }
        }
      } else {
        if (ones === 6 && seenZero) {
          this.inFrame = inFrame;
          this.zeroSample = zeroSample;
          this.lenBeforeZero = lenBeforeZero;
          this.stuffedBeforeZero = stuffedBeforeZero;
          this.sampleBeforeZero = sampleBeforeZero;
          this.firstSample = firstSample;
          this.flag(s);
          ({ inFrame, len, lineCount, acc, zeroSample, lenBeforeZero, stuffedBeforeZero, sampleBeforeZero } = this);
        } else {
          if (ones >= 15) {
            this.runStart = runStart;
            this.idle(prev);
          }
          if (inFrame) {
            if (lineCount === 0) firstSample = s;
            lenBeforeZero = len;
            sampleBeforeZero = prev;
            stuffedBeforeZero = this.stuffed.length;
            if (ones === 5) {
              this.stuffed.push(lineCount);
            } else {
              if ((len & 7) === 7) {
                if (len >> 3 >= this.buf.length) {
                  this.len = len;
                  this.prevSample = prev;
                  this.firstSample = firstSample;
                  if (!this.room()) {
                    ({ inFrame, len, lineCount, acc } = this);
                    zeroSample = s;
                    seenZero = true;
                    ones = 0;
                    prev = s;
                    continue;
                  }
                }
                this.buf[len >> 3] = acc;
                acc = 0;
              }
              len++;
            }
            lineCount++;
          }
          zeroSample = s;
        }
        seenZero = true;
        ones = 0;
      }
      prev = s;
    }
    this.ones = ones;
    this.inFrame = inFrame;
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
    this.bitsSeen += n;
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
      this.stuffed.length = this.stuffedBeforeZero;
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
    this.stuffed = [];
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
    this.stuffed = [];
  }

  private overflow(): void {
    this.closeStretch();
    this.emit('abort', this.prevSample);
    this.inFrame = false;
    this.len = 0;
    this.acc = 0;
    this.lineCount = 0;
    this.stuffed = [];
  }

  private idle(endSample: number): void {
    this.closeStretch();
    this.sink.event({ link: this.link, channel: this.link, kind: 'idle', sample: this.runStart, endSample });
  }

  private closeStretch(): void {
    if (this.stretchCount >= 2) {
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

  private emit(status: FrameStatus, lastSample: number): void {
    const len = this.len;
    const whole = len >> 3;
    const f: RawFrame = {
      link: this.link,
      seq: this.seq++,
      firstSample: this.firstSample,
      lastSample,
      bytes: this.buf.slice(0, whole),
      bitLength: len,
      stuffed: this.stuffed,
      status,
    };
    this.sink.frame(f);
  }
}
