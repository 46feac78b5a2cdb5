import type { LinkBits } from './link-bits';

/**
 * Recovers a bit clock from one data line's transitions: a digital phase-locked loop.
 *
 * Every transition should fall on a bit-cell boundary; the loop measures how far it lies
 * from where the current clock estimate puts the boundary and nudges both the phase
 * (PHASE_GAIN) and the period (FREQ_GAIN) toward it. Cells are sampled in their middle.
 *
 * - It locks on the first transition, so bits start there: the line's earlier idle cannot be
 *   counted.
 * - NRZI with zero-bit insertion guarantees a transition at least every 7 cells (six 1s of a
 *   flag then a 0), so a rate error of a few % plus jitter never moves the sampling point out
 *   of the cell. NRZ has no such bound: long runs of equal bits are counted with the period
 *   learned so far, which holds for runs of a few dozen bits at most; idle (no transitions at
 *   all) may gain or lose a bit, which only changes the length of an idle stretch.
 * - Pulses shorter than 35 % of a bit are glitches: both of their edges are dropped
 *   (a real cell is never that short), so they neither move the clock nor flip a bit. A
 *   glitch right beside a real edge gives two short pulses in a row; the three edges become
 *   one, placed so the time spent at each level is kept (off by at most the glitch width).
 * - The period is kept within ±10 % of the nominal one.
 * - A silent stretch costs constant time: after MAX_SILENT_CELLS cells without a transition the
 *   line is idle (or held at space, where no frame can go on either), no further cells are counted, and the next transition locks afresh. Without this a long gap,
 *   or a capture whose times jump far ahead, would be walked bit by bit.
 */
const PHASE_GAIN = 0.5;
const FREQ_GAIN = 0.02;
const MAX_RATE_ERROR = 0.1;
/** pulses shorter than this share of a bit are glitches (real cells shrink by at most the jitter) */
const GLITCH_FRACTION = 0.35;
/**
 * cells counted after the last transition before the line counts as silent: far beyond the 7
 * cells of an abort and the 15 of idle (ISO/IEC 13239, from memory), and beyond any run NRZ data
 * holds with the learned period
 */
export const MAX_SILENT_CELLS = 256;

export class ClockRecovery {
  private period: number;
  private readonly minPeriod: number;
  private readonly maxPeriod: number;
  private readonly minPulse: number;
  /** sample position (fractional) of the next cell's middle, once locked */
  private next = 0;
  private locked = false;
  /** cells emitted since the last transition */
  private silent = 0;
  /** line level now (0/1), -1 before the first value */
  level = -1;
  /**
   * Transitions held back until we know they are not the edges of a glitch: A (and B when the
   * pulse A..B is short). Levels alternate, so A's level is the opposite of `level` and B's is
   * `level` again.
   */
  private a = -1;
  private b = -1;

  constructor(
    nominal: number,
    private readonly out: LinkBits,
  ) {
    this.period = nominal;
    this.minPeriod = nominal * (1 - MAX_RATE_ERROR);
    this.maxPeriod = nominal * (1 + MAX_RATE_ERROR);
    this.minPulse = nominal * GLITCH_FRACTION;
  }

  /** the line changed level (0 ↔ 1) at sample `s`; the first call gives the initial level `v` */
  change(s: number, v: number): void {
    if (this.level < 0) {
      this.level = v;
      this.out.ref = v;
      return;
    }
    // after an unknown stretch the line may come back at the level it had: no change
    const now = this.a < 0 ? this.level : this.b < 0 ? 1 - this.level : this.level;
    if (v === now) return;
    if (this.a < 0) {
      this.a = s;
      return;
    }
    if (this.b < 0) {
      if (s - this.a < this.minPulse) this.b = s;
      else {
        this.apply(this.a);
        this.a = s;
      }
      return;
    }
    if (s - this.b >= this.minPulse) {
      // A..B was a glitch on its own
      this.a = s;
    } else {
      // two short pulses in a row: an edge with a glitch just before or after it. One edge
      // replaces the three, placed so the time spent at each level stays the same.
      this.a = this.a + s - this.b;
    }
    this.b = -1;
  }

  /**
   * Time has reached sample `s` with no further change on this line; `end` when the capture
   * ends there. Emits the cells that are now certain, so bits do not wait for the next edge.
   */
  reach(s: number, end: boolean): void {
    if (this.b >= 0) {
      // a short pulse with nothing after it: a glitch, once no third edge can still come
      if (end || s - this.b >= this.minPulse) {
        this.a = -1;
        this.b = -1;
      }
    } else if (this.a >= 0 && (end || s - this.a >= this.minPulse)) {
      this.apply(this.a);
      this.a = -1;
    }
    if (!this.locked) return;
    // cells whose middle is covered; while a transition is pending, only up to it
    this.emitUpTo(this.a >= 0 ? this.a : s);
  }

  private emitUpTo(t: number): void {
    let next = this.next;
    const level = this.level;
    let silent = this.silent;
    while (next <= t) {
      if (silent >= MAX_SILENT_CELLS) {
        // the rest of the stretch is silence: skipped in one step, the next edge locks again
        this.locked = false;
        break;
      }
      this.out.sampled(level, Math.round(next));
      next += this.period;
      silent++;
    }
    this.silent = silent;
    this.next = next;
  }

  private apply(t: number): void {
    const v = 1 - this.level;
    // a change at the very sampling instant counts as after it (setup time)
    if (this.locked) this.emitUpTo(t);
    this.silent = 0;
    if (!this.locked) {
      this.locked = true;
      this.next = t + this.period / 2;
      this.level = v;
      return;
    }
    const err = t - (this.next - this.period / 2);
    this.next += PHASE_GAIN * err;
    let p = this.period + FREQ_GAIN * err;
    if (p < this.minPeriod) p = this.minPeriod;
    else if (p > this.maxPeriod) p = this.maxPeriod;
    this.period = p;
    this.level = v;
  }
}
