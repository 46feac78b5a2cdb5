// Streaming statistics of one group of frames (one direction, one selector value or all), by
// octet offset. Fixed-size typed arrays, a handful of integer updates per offset and frame.
import { nameHasAttributes } from './shapes';
import type { HintFrame } from './types';

/** offsets looked at from the start of the information field */
export const SPAN = 64;
/** frames kept per group to list the frames behind each hint */
export const RESERVOIR = 1500;
/** length-field differences looked at: value − octets after the field, −32 … 32 */
const DIFF = 32;
const DIFF_BINS = 2 * DIFF + 1;
/** number readings of a record number around its least significant octet k */
export const READINGS = ['u8', 'u16be', 'u16le', 'u24be', 'u24le'] as const;
export type Reading = (typeof READINGS)[number];
/** length-field readings at offset k */
export const LENGTH_TYPES = ['u8', 'u16be', 'u16le'] as const;
/** step outcomes */
const PLUS = 0;
const SAME = 1;
const OTHER = 2;

/** The value of a reading whose least significant octet is at k; -1 when it does not fit. */
export function readAt(info: Uint8Array, k: number, r: number): number {
  const n = info.length;
  switch (r) {
    case 0:
      return k < n ? info[k] : -1;
    case 1:
      return k >= 1 && k < n ? (info[k - 1] << 8) | info[k] : -1;
    case 2:
      return k + 1 < n ? info[k] | (info[k + 1] << 8) : -1;
    case 3:
      return k >= 2 && k < n ? (info[k - 2] << 16) | (info[k - 1] << 8) | info[k] : -1;
    default:
      return k + 2 < n ? info[k] | (info[k + 1] << 8) | (info[k + 2] << 16) : -1;
  }
}

export function lengthValue(info: Uint8Array, k: number, t: number): number {
  if (t === 0) return k < info.length ? info[k] : -1;
  if (k + 1 >= info.length) return -1;
  return t === 1 ? (info[k] << 8) | info[k + 1] : info[k] | (info[k + 1] << 8);
}

export const lengthWidth = (t: number) => (t === 0 ? 1 : 2);

interface Last {
  info: Uint8Array;
  selector: number;
}

export class GroupStats {
  frames = 0;
  readonly present = new Uint32Array(SPAN);
  readonly hist = new Uint32Array(SPAN * 256);
  readonly lengths = new Map<number, number>();
  /** [scope (0 station, 1 frame)][outcome][k] of u8 steps */
  readonly steps = new Uint32Array(2 * 3 * SPAN);
  /** [outcome][k] of u8 steps between a station's frames of different selector values (different calls) */
  readonly crossSteps = new Uint32Array(3 * SPAN);
  /** [reading][outcome][k] of steps between requests of the same station and file */
  readonly fileSteps = new Uint32Array(READINGS.length * 3 * SPAN);
  /** [type][k][diff] */
  readonly lenDiff = new Uint32Array(LENGTH_TYPES.length * SPAN * DIFF_BINS);
  readonly nameFit = new Uint32Array(SPAN);
  readonly nameAttr = new Uint32Array(SPAN);
  /** frames whose last 128 octets start at p */
  readonly blockAt = new Uint32Array(SPAN + 1);
  /** frames whose printable tail (8 octets or more) starts at k */
  readonly textAt = new Uint32Array(SPAN);
  /** frames that were the first of their station to name their file */
  firstForFile = 0;
  withName = 0;
  readonly reservoir: HintFrame[] = [];
  /** per reservoir frame: its file key (0 when it names none) */
  readonly reservoirFile: number[] = [];
  private readonly byStation = new Map<number, Last>();
  private last: Last | null = null;
  private readonly byFile = new Map<number, Last>();

  constructor(readonly fileNumbers: boolean) {}

  /**
   * One frame. `names` lists the offsets where a CP/M name fits (the first is the one the file key
   * uses); the caller finds them once for both groups a frame goes to.
   */
  push(f: HintFrame, file: number, names: readonly number[], firstForFile: boolean, selector: number): void {
    const info = f.info;
    const n = info.length;
    const span = n < SPAN ? n : SPAN;
    this.frames++;
    this.lengths.set(n, (this.lengths.get(n) ?? 0) + 1);
    if (this.reservoir.length < RESERVOIR) {
      this.reservoir.push(f);
      this.reservoirFile.push(file);
    }
    const hist = this.hist;
    const present = this.present;
    const ld = this.lenDiff;
    // values, and length readings: value − octets after, kept when within ±DIFF
    const u16 = SPAN * DIFF_BINS;
    for (let k = 0; k < span; k++) {
      const v = info[k];
      present[k]++;
      hist[(k << 8) | v]++;
      let d = v - (n - k - 1);
      if (d >= -DIFF && d <= DIFF) ld[k * DIFF_BINS + d + DIFF]++;
      if (k + 1 < span) {
        const w = info[k + 1];
        const after = n - k - 2;
        d = ((v << 8) | w) - after;
        if (d >= -DIFF && d <= DIFF) ld[u16 + k * DIFF_BINS + d + DIFF]++;
        d = (v | (w << 8)) - after;
        if (d >= -DIFF && d <= DIFF) ld[2 * u16 + k * DIFF_BINS + d + DIFF]++;
      }
    }
    // u8 steps: per station (and across calls), and frame to frame
    const st = this.byStation.get(f.station);
    if (st) {
      this.step(st.info, info, 0, st.selector !== selector);
      st.info = info;
      st.selector = selector;
    } else this.byStation.set(f.station, { info, selector });
    if (this.last) {
      this.step(this.last.info, info, 1, false);
      this.last.info = info;
    } else this.last = { info, selector };
    // numbers that step across consecutive requests of the same station and file
    if (this.fileNumbers && file) {
      const prev = this.byFile.get(file);
      if (prev) {
        this.fileStep(prev.info, info);
        prev.info = info;
      } else this.byFile.set(file, { info, selector });
    }
    if (names.length) {
      const at = names[0];
      if (at < SPAN) {
        this.withName++;
        if (nameHasAttributes(info, at)) this.nameAttr[at]++;
      }
      for (const k of names) if (k < SPAN) this.nameFit[k]++;
    }
    if (firstForFile) this.firstForFile++;
    if (n >= 128 && n - 128 <= SPAN) this.blockAt[n - 128]++;
  }

  textTail(start: number, n: number): void {
    if (n - start >= 8 && start < SPAN) this.textAt[start]++;
  }

  private step(prev: Uint8Array, cur: Uint8Array, scope: number, cross: boolean): void {
    const m = Math.min(prev.length, cur.length, SPAN);
    const base = scope * 3 * SPAN;
    const s = this.steps;
    const c = this.crossSteps;
    for (let k = 0; k < m; k++) {
      const d = (cur[k] - prev[k]) & 0xff;
      const o = (d === 1 ? PLUS : d === 0 ? SAME : OTHER) * SPAN + k;
      s[base + o]++;
      if (cross) c[o]++;
    }
  }

  crossCounts(k: number): { plus: number; same: number; other: number } {
    return { plus: this.crossSteps[PLUS * SPAN + k], same: this.crossSteps[SAME * SPAN + k], other: this.crossSteps[OTHER * SPAN + k] };
  }

  private fileStep(prev: Uint8Array, cur: Uint8Array): void {
    const m = Math.min(prev.length, cur.length, SPAN);
    const s = this.fileSteps;
    const P = PLUS * SPAN;
    const S = SAME * SPAN;
    const O = OTHER * SPAN;
    const R = 3 * SPAN;
    for (let k = 0; k < m; k++) {
      const a0 = prev[k];
      const b0 = cur[k];
      // u8
      let d = b0 - a0;
      s[(d === 1 ? P : d === 0 ? S : O) + k]++;
      // u16be: octets k-1, k
      if (k >= 1) {
        d = ((cur[k - 1] << 8) | b0) - ((prev[k - 1] << 8) | a0);
        s[R + (d === 1 ? P : d === 0 ? S : O) + k]++;
      }
      // u16le: octets k, k+1
      if (k + 1 < m) {
        d = (b0 | (cur[k + 1] << 8)) - (a0 | (prev[k + 1] << 8));
        s[2 * R + (d === 1 ? P : d === 0 ? S : O) + k]++;
      }
      // u24be: octets k-2 … k
      if (k >= 2) {
        d = ((cur[k - 2] << 16) | (cur[k - 1] << 8) | b0) - ((prev[k - 2] << 16) | (prev[k - 1] << 8) | a0);
        s[3 * R + (d === 1 ? P : d === 0 ? S : O) + k]++;
      }
      // u24le: octets k … k+2
      if (k + 2 < m) {
        d = (b0 | (cur[k + 1] << 8) | (cur[k + 2] << 16)) - (a0 | (prev[k + 1] << 8) | (prev[k + 2] << 16));
        s[4 * R + (d === 1 ? P : d === 0 ? S : O) + k]++;
      }
    }
  }

  stepCounts(scope: 0 | 1, k: number): { plus: number; same: number; other: number } {
    const base = scope * 3 * SPAN;
    return { plus: this.steps[base + PLUS * SPAN + k], same: this.steps[base + SAME * SPAN + k], other: this.steps[base + OTHER * SPAN + k] };
  }

  fileStepCounts(r: number, k: number): { plus: number; same: number; other: number } {
    const base = r * 3 * SPAN;
    return { plus: this.fileSteps[base + PLUS * SPAN + k], same: this.fileSteps[base + SAME * SPAN + k], other: this.fileSteps[base + OTHER * SPAN + k] };
  }

  /** the most frequent difference (value − octets after) of a length reading, and how often */
  lengthBest(t: number, k: number): { add: number; count: number } {
    let best = -1;
    let at = 0;
    const base = (t * SPAN + k) * DIFF_BINS;
    for (let d = 0; d < DIFF_BINS; d++) {
      const c = this.lenDiff[base + d];
      if (c > best) {
        best = c;
        at = d;
      }
    }
    return { add: at - DIFF, count: best };
  }

  /** values at offset k, most frequent first */
  values(k: number): { value: number; count: number }[] {
    const out: { value: number; count: number }[] = [];
    for (let v = 0; v < 256; v++) {
      const c = this.hist[(k << 8) | v];
      if (c) out.push({ value: v, count: c });
    }
    return out.sort((a, b) => b.count - a.count || a.value - b.value);
  }
}
