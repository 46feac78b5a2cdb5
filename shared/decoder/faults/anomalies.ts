// Line anomalies for the fault desk, found in the sampled levels beside bit recovery: it reads
// the same Transitions a sample reader emits (tap them next to BitRecovery) and reports what a
// clean synchronous line never shows:
//   glitch         a pulse on a data line shorter than half a bit; short pulses in a row are one anomaly
//                  spanning them, so a spike in mid-cell reports the pieces it cut that cell into
//   clock-missing  an interval between active clock edges of about two periods or more (count = edges left out)
//   clock-extra    an active clock edge far too soon after the previous good one
//   clock-stretch  an interval between active clock edges longer than usual (a quarter of a period
//                  or more by default) but short of a missing edge: the transmitter's clock was held
//   unknown        a watched channel at an unknown level (VCD x/z, value 2) from `sample` to `endSample`
//   silence        no activity for `silenceBits` bit times: the clock stopped, or (without a clock,
//                  NRZI only) the data line stopped changing
// The stage cannot tell where frames are, so it reports every silence; attachAnomalies() (below)
// keeps the ones inside a frame's window, which is where a silence means damage (between frames a
// line may legitimately rest).
//
// Thresholds are fractions of the bit period: half a bit for a glitch (the shortest legal pulse
// is one bit cell, less jitter), under half a period for an extra edge, 1.5 periods or more for
// missing edges (common practice for edge-interval checks; the encoder's jitter and rate-error
// faults stay well inside these). Every interval that is neither missing nor extra nor a stopped
// clock also goes into a histogram of the period (timing/clock-spread.ts), handed to the sink's
// clockSpread() at the end: the octet timing of the capture. The period comes from the nominal bit rate when given, else it
// is learned from the clock (median of its first intervals, then followed slowly so a few %
// rate error does not drift into the limits).
//
// Per transition the state is a handful of numbers in typed arrays; objects are made only for an
// anomaly found.
import { ClockPeriodHistogram, type ClockSpread } from '../timing/clock-spread';
import type { ClockEdge, LineEncoding, Transitions } from '../types';


export const ANOMALY_KINDS = ['glitch', 'clock-missing', 'clock-extra', 'clock-stretch', 'silence', 'unknown'] as const;
export type AnomalyKind = (typeof ANOMALY_KINDS)[number];

export interface LineAnomaly {
  kind: AnomalyKind;
  /** the link whose data line it is on; null for the clock, which times every link */
  link: string | null;
  /** channel name (the link name for data lines) */
  channel: string;
  /**
   * where it starts: the glitch's first edge; the time the first missing clock edge was due;
   * the extra edge; the first unknown sample; the last activity before a silence
   */
  sample: number;
  /** where it ends: the glitch's last edge; the edge after the gap; the first known sample; the activity ending a silence */
  endSample: number;
  /** glitch: pulses in the burst; clock-missing: edges left out; otherwise 1 */
  count: number;
  /** length in bit times (endSample - sample over the bit period; 0 when the period is unknown) */
  bits: number;
}

export interface AnomalySink {
  anomaly(a: LineAnomaly): void;
  /** at the end, for a capture with a clock channel that ticked: how its period spread */
  clockSpread?(spread: ClockSpread): void;
}

/** Channel roles as bit recovery takes them; a BitRecoveryOptions object fits. */
export interface AnomalyTapOptions {
  samplePeriodSeconds: number;
  /** clock channel index; omit when the clock is recovered from the data */
  clock?: number;
  /** display name of the clock channel (default "clock") */
  clockName?: string;
  /** edge the bits are sampled on (default rising); clock intervals are measured between these */
  edge?: ClockEdge;
  data: { channel: number; link: string }[];
  encoding?: LineEncoding;
  /** nominal bit/s; without it the period is learned from the clock (no clock and no rate: no period-based checks) */
  bitRate?: number;
  /** bit times without activity that make a silence (default 16: beyond any flag, abort or stuffed run) */
  silenceBits?: number;
  /** pulses shorter than this fraction of a bit are glitches (default 0.5) */
  glitchFraction?: number;
  /** clock intervals of at least this many periods (and under 1.5) are stretched (default 1.25) */
  stretchFraction?: number;
}

const CLOCK = 1;
const DATA = 2;
/** intervals the period is learned from when no bit rate is given */
const LEARN_INTERVALS = 16;
/** data changes held while the period is being learned */
const HOLD = 4096;
/** how far the period may grow within one stretch of the fused feed before quiet() declines it */
const QUIET_HEADROOM = 1.0625;
/** quiet() counts clock intervals of fewer samples than this by length */
const TALLY = 256;

export class AnomalyTap {
  private readonly role = new Uint8Array(256);
  private readonly slot = new Int32Array(256);
  private readonly level = new Uint8Array(256).fill(255);
  /** sample of the last change per channel (-1 before any) */
  private readonly lastChange = new Float64Array(256).fill(-1);
  private readonly unknownFrom = new Float64Array(256).fill(-1);
  /** per channel: an open burst of short pulses (start, end, pulses); count 0 = none */
  private readonly burstStart = new Float64Array(256);
  private readonly burstEnd = new Float64Array(256);
  private readonly burstCount = new Int32Array(256);
  private readonly names: string[] = [];
  private readonly links: (string | null)[] = [];
  private readonly clock: number;
  private readonly active: number;
  private readonly silenceBits: number;
  private readonly glitchFraction: number;
  private readonly stretchFraction: number;
  private readonly histogram: ClockPeriodHistogram;
  private readonly samplePeriod: number;
  /** data silence is only meaningful where a frame cannot hold a long steady level (NRZI without a clock) */
  private readonly dataSilence: boolean;

  /** samples per bit; 0 until known */
  private period = 0;
  private clockLevel = 255;
  /** last active clock edge accepted as on time (-1 before the first) */
  private lastEdge = -1;
  private lastSeen = 0;

  // learning the period from the clock
  private learning: boolean;
  private readonly learnEdges = new Float64Array(LEARN_INTERVALS + 1);
  private learnCount = 0;
  private readonly heldChannel = new Uint8Array(HOLD);
  private readonly heldSample = new Float64Array(HOLD);
  private held = 0;
  /** quiet(): clock intervals of the stretch by length in samples */
  private readonly tally = new Int32Array(TALLY);

  /** anomalies reported so far */
  reported = 0;

  constructor(
    options: AnomalyTapOptions,
    private readonly sink: AnomalySink,
  ) {
    this.clock = options.clock ?? -1;
    this.active = options.edge === 'falling' ? 0 : 1;
    this.silenceBits = options.silenceBits ?? 16;
    this.glitchFraction = options.glitchFraction ?? 0.5;
    this.stretchFraction = options.stretchFraction ?? 1.25;
    this.histogram = new ClockPeriodHistogram(this.stretchFraction);
    this.samplePeriod = options.samplePeriodSeconds;
    if (this.clock >= 0) {
      this.role[this.clock] = CLOCK;
      this.names[this.clock] = options.clockName ?? 'clock';
      this.links[this.clock] = null;
    }
    for (const d of options.data) {
      if (d.channel === this.clock) continue;
      this.role[d.channel] = DATA;
      this.names[d.channel] = d.link;
      this.links[d.channel] = d.link;
    }
    this.dataSilence = this.clock < 0 && options.encoding === 'nrzi';
    if (options.bitRate && options.bitRate > 0) this.period = 1 / (options.bitRate * options.samplePeriodSeconds);
    this.learning = this.period === 0 && this.clock >= 0;
  }

  /** samples per bit in use (0 while unknown) */
  get samplesPerBit(): number {
    return this.period;
  }

  transitions(t: Transitions): void {
    const { channel, sample, value } = t;
    const role = this.role;
    const level = this.level;
    const n = t.n;
    for (let i = 0; i < n; i++) {
      const c = channel[i];
      const r = role[c];
      if (r === 0) continue;
      const v = value[i];
      const s = sample[i];
      const old = level[c];
      // readers repeat a level only to mark the end of the capture
      if (v === old) continue;
      level[c] = v;
      if (v === 2) {
        this.unknownFrom[c] = s;
        if (r === DATA) this.closeBurst(c);
        continue;
      }
      if (old === 2) {
        this.report('unknown', c, this.unknownFrom[c], s, 1);
        this.unknownFrom[c] = -1;
        this.lastChange[c] = s;
        if (r === CLOCK) this.clockLevel = v;
        continue;
      }
      if (r === CLOCK) {
        const was = this.clockLevel;
        this.clockLevel = v;
        // an edge counts only from the idle level: one out of unknown is no edge (as in bit recovery)
        if (v === this.active && was === 1 - this.active) this.clockEdge(s);
      } else if (old === 255) {
        this.lastChange[c] = s;
      } else if (this.learning) {
        this.hold(c, s);
      } else {
        this.dataChange(c, s);
      }
    }
    if (n > 0) this.lastSeen = sample[n - 1];
  }

  /**
   * The fused raw path's feed, instead of transitions() once the first levels went through it:
   * the active clock edges at clockEdges[from, to) and the data-line changes (changeChannel[k],
   * changeSample[k]) for k < changes, since the last call, each list in time order. Raw samples
   * hold no unknown level, so an active edge always comes from the idle level. Both lists are
   * taken together in time order, channel by channel within a sample, as transitions() takes a
   * reader's batch, so the anomalies and their order are the same.
   */
  edges(clockEdges: Float64Array, from: number, to: number, changeChannel: Uint8Array, changeSample: Float64Array, changes: number): void {
    const clock = this.clock;
    let i = from;
    for (let k = 0; k < changes; k++) {
      const s = changeSample[k];
      const c = changeChannel[k];
      while (i < to && (clockEdges[i] < s || (clockEdges[i] === s && clock < c))) this.clockEdge(clockEdges[i++]);
      if (this.learning) this.hold(c, s);
      else this.dataChange(c, s);
    }
    while (i < to) this.clockEdge(clockEdges[i++]);
  }

  /**
   * For the fused raw path's screen: a data-line change that comes at least this many samples
   * after the line's previous change cannot be (part of) a glitch while the period stays within
   * QUIET_HEADROOM of its value now; Infinity when every change needs looking at (the period is
   * still being learned, or a burst of short pulses is open).
   */
  quietScreen(): number {
    if (this.learning || this.period === 0 || this.dataSilence) return Infinity;
    for (let c = 0; c < 256; c++) if (this.burstCount[c] > 0) return Infinity;
    return this.glitchFraction * this.period * QUIET_HEADROOM;
  }

  /**
   * The fused raw path's fast feed: takes the clock edges at clockEdges[from, to) in one step when
   * none of them is reported (each comes on time, as classifyEdge judges) and the period stays
   * low enough for `screen` (from quietScreen()) to have cleared every data-line change in the
   * same stretch. Then only the state moves: period, last edge, and the last change of each data
   * line (dataChannels[k] → lastChange[k]); returns true. Otherwise changes nothing and returns
   * false: the caller feeds the stretch change by change through edges().
   */
  quiet(clockEdges: Float64Array, from: number, to: number, screen: number, dataChannels: Int32Array, lastChange: Float64Array): boolean {
    if (this.learning || this.period === 0 || this.dataSilence) return false;
    let p = this.period;
    let most = p;
    let last = this.lastEdge;
    let i = from;
    if (last < 0 && i < to) last = clockEdges[i++];
    const first = i;
    const start = last;
    // the same limits as classifyEdge: anything but an on-time edge is reported there. (d >= a·p
    // for any of a = silence, 1.5, stretch is d >= min(a)·p: p > 0 and rounding keeps the order.)
    const late = Math.min(this.silenceBits, 1.5, this.stretchFraction);
    if (first < to && this.steady(clockEdges, first, to, start, late, screen)) return this.taken(clockEdges[to - 1], dataChannels, lastChange);
    // intervals counted by length while they are small whole numbers (raw samples give those),
    // so the histogram takes each length once
    const tally = this.tally;
    let counted = true;
    for (; i < to; i++) {
      const s = clockEdges[i];
      const d = s - last;
      if (d < 0.5 * p || d >= late * p) {
        if (counted) tally.fill(0);
        return false;
      }
      p = p + (d - p) / 64;
      if (p > most) most = p;
      if (counted) {
        if (d < TALLY && (d | 0) === d) tally[d]++;
        else {
          counted = false;
          tally.fill(0);
        }
      }
      last = s;
    }
    if (this.glitchFraction * most > screen) {
      if (counted) tally.fill(0);
      return false;
    }
    // taken: every interval goes into the period's histogram as classifyEdge puts it there
    if (counted) {
      for (let d = 0; d < TALLY; d++) {
        if (tally[d] === 0) continue;
        this.histogram.addRepeated(d, tally[d], this.period);
        tally[d] = 0;
      }
    } else {
      let q = this.period;
      let at = start;
      for (let k = first; k < to; k++) {
        const s = clockEdges[k];
        const d = s - at;
        this.histogram.add(d, q);
        q = q + (d - q) / 64;
        at = s;
      }
    }
    this.period = p;
    return this.taken(last, dataChannels, lastChange);
  }

  /**
   * quiet()'s shortcut, without the period's chain of dependent steps (each interval's step waits
   * for the one before): when every interval of clockEdges[first, to) (from `start`) is one whole
   * length and the period is already where a step of that length leaves it, the period stays as it
   * is through the stretch. Then the checks are those of quiet() at that period, and the intervals
   * go into the histogram in one step; true when taken (the period and histogram are set, the last
   * edge and changes are the caller's), false to leave the stretch to the full loop.
   */
  private steady(clockEdges: Float64Array, first: number, to: number, start: number, late: number, screen: number): boolean {
    let lo = clockEdges[first] - start;
    let hi = lo;
    let at = clockEdges[first];
    for (let k = first + 1; k < to; k++) {
      const s = clockEdges[k];
      const d = s - at;
      lo = Math.min(lo, d);
      hi = Math.max(hi, d);
      at = s;
    }
    const p = this.period;
    if (lo !== hi || !(lo < TALLY && (lo | 0) === lo) || p + (lo - p) / 64 !== p) return false;
    if (lo < 0.5 * p || lo >= late * p || this.glitchFraction * p > screen) return false;
    this.histogram.addRepeated(lo, to - first, p);
    return true;
  }

  /** a stretch taken by quiet(): the last accepted edge and each data line's last change move */
  private taken(lastEdge: number, dataChannels: Int32Array, lastChange: Float64Array): boolean {
    this.lastEdge = lastEdge;
    for (let k = 0; k < dataChannels.length; k++) {
      const c = dataChannels[k];
      if (this.role[c] === DATA) this.lastChange[c] = lastChange[k];
    }
    return true;
  }

  finish(): void {
    if (this.learning) this.learn();
    for (let c = 0; c < 256; c++) {
      if (this.role[c] === DATA) this.closeBurst(c);
      if (this.role[c] !== 0 && this.level[c] === 2 && this.unknownFrom[c] >= 0) {
        this.report('unknown', c, this.unknownFrom[c], Math.max(this.lastSeen, this.unknownFrom[c]), 1);
        this.unknownFrom[c] = -1;
      }
    }
    const spread = this.clockSpread();
    if (spread) this.sink.clockSpread?.(spread);
  }

  /** how the clock's period spread so far; null without a clock or before its second edge */
  clockSpread(): ClockSpread | null {
    return this.clock >= 0 ? this.histogram.spread(this.samplePeriod) : null;
  }

  private clockEdge(s: number): void {
    if (this.learning) {
      this.learnEdges[this.learnCount++] = s;
      if (this.learnCount > LEARN_INTERVALS) this.learn();
      return;
    }
    this.classifyEdge(s);
  }

  private classifyEdge(s: number): void {
    const last = this.lastEdge;
    if (last < 0 || this.period === 0) {
      this.lastEdge = s;
      return;
    }
    const p = this.period;
    const d = s - last;
    if (d < 0.5 * p) {
      // too soon: measured again from the last good edge, so the real edge after it is not flagged too
      this.histogram.extra++;
      this.report('clock-extra', this.clock, s, s, 1);
      return;
    }
    if (d >= this.silenceBits * p) {
      this.report('silence', this.clock, last, s, 1);
    } else if (d >= 1.5 * p) {
      this.histogram.missing++;
      this.report('clock-missing', this.clock, Math.round(last + p), s, Math.max(1, Math.round(d / p) - 1));
    } else {
      this.histogram.add(d, p);
      if (d >= this.stretchFraction * p) {
        this.histogram.stretched++;
        this.report('clock-stretch', this.clock, last, s, 1);
      } else {
        // follow slow rate differences (a few % off nominal, a warm oscillator)
        this.period = p + (d - p) / 64;
      }
    }
    this.lastEdge = s;
  }

  private dataChange(c: number, s: number): void {
    const from = this.lastChange[c];
    this.lastChange[c] = s;
    if (from < 0 || this.period === 0) return;
    const w = s - from;
    if (w < this.glitchFraction * this.period) {
      if (this.burstCount[c] > 0 && this.burstEnd[c] === from) {
        this.burstEnd[c] = s;
        this.burstCount[c]++;
      } else {
        this.closeBurst(c);
        this.burstStart[c] = from;
        this.burstEnd[c] = s;
        this.burstCount[c] = 1;
      }
      return;
    }
    this.closeBurst(c);
    if (this.dataSilence && w >= this.silenceBits * this.period) this.report('silence', c, from, s, 1);
  }

  private closeBurst(c: number): void {
    const k = this.burstCount[c];
    if (k === 0) return;
    this.burstCount[c] = 0;
    this.report('glitch', c, this.burstStart[c], this.burstEnd[c], k);
  }

  private hold(c: number, s: number): void {
    if (this.held === HOLD) this.learn();
    if (!this.learning) {
      this.dataChange(c, s);
      return;
    }
    this.heldChannel[this.held] = c;
    this.heldSample[this.held] = s;
    this.held++;
  }

  /** sets the period from the clock intervals seen so far, then replays what waited for it */
  private learn(): void {
    this.learning = false;
    const k = this.learnCount - 1;
    if (k >= 1) {
      const intervals = new Float64Array(k);
      for (let i = 0; i < k; i++) intervals[i] = this.learnEdges[i + 1] - this.learnEdges[i];
      intervals.sort();
      this.period = intervals[k >> 1];
    }
    for (let i = 0; i < this.learnCount; i++) this.classifyEdge(this.learnEdges[i]);
    this.learnCount = 0;
    for (let i = 0; i < this.held; i++) this.dataChange(this.heldChannel[i], this.heldSample[i]);
    this.held = 0;
  }

  private report(kind: AnomalyKind, c: number, sample: number, endSample: number, count: number): void {
    this.reported++;
    this.sink.anomaly({
      kind,
      link: this.links[c] ?? null,
      channel: this.names[c] ?? String(c),
      sample,
      endSample,
      count,
      bits: this.period > 0 ? (endSample - sample) / this.period : 0,
    });
  }
}

// ---- attaching anomalies to frames ----

/** A frame as far as attachment needs it. */
export interface FrameWindow {
  link: string;
  seq: number;
  firstSample: number;
  lastSample: number;
}

export interface FrameRef {
  link: string;
  seq: number;
}

export interface AttachedAnomaly {
  anomaly: LineAnomaly;
  /** frames whose window it falls in: none, one, or (a clock anomaly) one per link in a frame at that time */
  frames: FrameRef[];
}

/**
 * Where an anomaly belongs: a data-line anomaly to the frame of its link, a clock anomaly to the
 * frame of every link timed by that clock. A glitch, missing or extra edge or unknown stretch
 * belongs to a frame when it overlaps the frame's [firstSample, lastSample]; a silence only when it
 * lies wholly inside (a pause that ends or starts at a frame boundary is the line resting).
 */
export function anomalyInWindow(a: LineAnomaly, first: number, last: number): boolean {
  if (a.kind === 'silence') return a.sample >= first && a.endSample <= last;
  return a.sample <= last && a.endSample >= first;
}

/** Frame windows per link, for finding the frames an anomaly falls in; compact (typed arrays). */
export class FrameWindowIndex {
  private readonly perLink = new Map<string, WindowList>();

  /**
   * `tag`: a number the caller keeps with the frame (the fault desk keeps the station address);
   * `bits`: the frame's line bits, when the caller wants them back
   */
  add(link: string, seq: number, firstSample: number, lastSample: number, tag = -1, bits = 0): void {
    let list = this.perLink.get(link);
    if (!list) this.perLink.set(link, (list = new WindowList()));
    list.add(seq, firstSample, lastSample, tag, bits);
  }

  /** the window of frame `seq` of `link`, if it was added (seq grows with time on a link) */
  byRef(link: string, seq: number): WindowHit | null {
    return this.perLink.get(link)?.byRef(link, seq) ?? null;
  }

  /** frames (of the anomaly's link, or of every link for a clock anomaly) the anomaly falls in */
  find(a: LineAnomaly): WindowHit[] {
    const out: WindowHit[] = [];
    if (a.link !== null) this.perLink.get(a.link)?.find(a, a.link, out);
    else for (const [link, list] of this.perLink) list.find(a, link, out);
    return out;
  }

  get links(): string[] {
    return [...this.perLink.keys()];
  }
}

export interface WindowHit {
  link: string;
  seq: number;
  first: number;
  last: number;
  tag: number;
  /** line bits of the frame (0 when not given) */
  bits: number;
}

class WindowList {
  first = new Float64Array(64);
  last = new Float64Array(64);
  seq = new Float64Array(64);
  tag = new Float64Array(64);
  bits = new Float64Array(64);
  n = 0;
  private sorted = true;

  add(seq: number, first: number, last: number, tag: number, bits: number): void {
    if (this.n === this.first.length) {
      const grow = (a: Float64Array) => {
        const b = new Float64Array(a.length * 2);
        b.set(a);
        return b;
      };
      this.first = grow(this.first);
      this.last = grow(this.last);
      this.seq = grow(this.seq);
      this.tag = grow(this.tag);
      this.bits = grow(this.bits);
    }
    if (this.n > 0 && first < this.first[this.n - 1]) this.sorted = false;
    this.first[this.n] = first;
    this.last[this.n] = last;
    this.seq[this.n] = seq;
    this.tag[this.n] = tag;
    this.bits[this.n] = bits;
    this.n++;
  }

  private sort(): void {
    const order = Array.from({ length: this.n }, (_, i) => i).sort((a, b) => this.first[a] - this.first[b]);
    const f = order.map((i) => this.first[i]);
    const l = order.map((i) => this.last[i]);
    const s = order.map((i) => this.seq[i]);
    const t = order.map((i) => this.tag[i]);
    const b = order.map((i) => this.bits[i]);
    this.first.set(f);
    this.last.set(l);
    this.seq.set(s);
    this.tag.set(t);
    this.bits.set(b);
    this.sorted = true;
  }

  find(a: LineAnomaly, link: string, out: WindowHit[]): void {
    if (!this.sorted) this.sort();
    // last window starting at or before the anomaly's end; frames of one link do not overlap
    let lo = 0;
    let hi = this.n - 1;
    let at = -1;
    while (lo <= hi) {
      const mid = (lo + hi) >> 1;
      if (this.first[mid] <= a.endSample) {
        at = mid;
        lo = mid + 1;
      } else hi = mid - 1;
    }
    const found: number[] = [];
    for (let i = at; i >= 0 && this.last[i] >= a.sample; i--) {
      if (anomalyInWindow(a, this.first[i], this.last[i])) found.push(i);
    }
    for (let k = found.length - 1; k >= 0; k--) {
      const i = found[k];
      out.push(this.hit(link, i));
    }
  }

  byRef(link: string, seq: number): WindowHit | null {
    if (!this.sorted) this.sort();
    let lo = 0;
    let hi = this.n - 1;
    while (lo <= hi) {
      const mid = (lo + hi) >> 1;
      const s = this.seq[mid];
      if (s === seq) return this.hit(link, mid);
      if (s < seq) lo = mid + 1;
      else hi = mid - 1;
    }
    return null;
  }

  private hit(link: string, i: number): WindowHit {
    return { link, seq: this.seq[i], first: this.first[i], last: this.last[i], tag: this.tag[i], bits: this.bits[i] };
  }
}

/** Attaches each anomaly to the frames whose window it falls in (see anomalyInWindow). */
export function attachAnomalies(anomalies: readonly LineAnomaly[], frames: Iterable<FrameWindow>): AttachedAnomaly[] {
  const index = new FrameWindowIndex();
  for (const f of frames) index.add(f.link, f.seq, f.firstSample, f.lastSample);
  return anomalies.map((anomaly) => ({ anomaly, frames: index.find(anomaly).map(({ link, seq }) => ({ link, seq })) }));
}
