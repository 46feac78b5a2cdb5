// The server's schedule as the wire shows it, and the service statistics that follow from it.
//
// A file server serves its stations in turn. Where a station's request line (RTS) was captured,
// the station raises it and waits until the server's round comes to it; the wait ends at the
// server's first frame to that station (the service delay). The same model holds on a multidrop
// line (stations share the data wires, each has its own request line; the address octet says whom
// a frame is for) and on per-port wiring (each station has its own pair of data lines): the input
// here is only frames with their station and direction, request-line edges per station, and the
// exchanges the call layer paired.
//
// Visits. The server visits a station from its first frame to it until it turns to another
// station. A new visit to the same station also starts at the server's first frame after the
// station raised its request line again, and at a poll (a supervisory frame with P set) after the
// station already ended its turn (a good frame with F set) in the visit. A visit ends at the last
// frame of either side in it.
//
// The round. The server's visiting order is read from the visits: the most visited station first,
// then each time the station most often visited next. A round (cycle) ends where the visits wrap
// around that order. A station is passed over when, while it waited (its request line up since
// before the server left the station it was serving), the server went from one station to another
// past its place in the order, or served one station twice in a row around it. Each pass is a
// skipped visit; a wait passed over `starveAfterRounds` times or more is starvation.
//
// Everything is kept in typed arrays (a million frames are a few arrays) and worked out once in
// finish(); frames and events may come in any order (they are put in time order there).
import type { ExchangeOutcome, LinkDirection } from '../calls/exchanges';
import type { FrameKind, FrameStatus } from '../types';
import { SpanBuilder, type SpanColumns } from './span-columns';
import { durationStats, Float64List, Int32List, type DurationStats } from './stats';

/** A frame as the schedule needs it. Times are in the caller's unit (sample indices, or seconds from stored rows). */
export interface TimingFrame {
  station: number;
  direction: LinkDirection;
  first: number;
  last: number;
  status: FrameStatus;
  kind: FrameKind | null;
  /** the P/F bit */
  pf: boolean;
  /** the caller's id (a database id, or the decoder's running number); -1 when none */
  id?: number;
}

export interface TimingExchange {
  station: number;
  /** first bit of the first send */
  first: number;
  /** first bit of the answer, or the last bit of the last send when unanswered */
  end: number;
  outcome: ExchangeOutcome;
  rttSeconds: number | null;
  id?: number;
}

export interface LineTimingOptions {
  /** seconds per time unit: the sample period when fed sample indices, 1 when fed seconds */
  secondsPerUnit: number;
  /** a wait passed over this many rounds or more is starvation (default 2) */
  starveAfterRounds?: number;
}

export const FRAME_STATUS_CODES: readonly FrameStatus[] = ['ok', 'bad-fcs', 'abort', 'short', 'residue'];
export const OUTCOME_CODES: readonly ExchangeOutcome[] = ['answered', 'retried', 'unanswered'];
/** how a wait ended: served by the server's frame, the station dropped its request line, or the capture ended */
export const WAIT_ENDS = ['served', 'withdrawn', 'capture-ended'] as const;
export type WaitEnd = (typeof WAIT_ENDS)[number];

/** One wait of a station: request line up → the server's first frame to it. Seconds. */
export interface Wait {
  station: number;
  rise: number;
  /** when it ended: the served frame's first bit, the request line's fall, or the capture's end */
  end: number;
  seconds: number;
  ended: WaitEnd;
  /** id of the server frame that served it */
  servedBy: number | null;
  /** times the server's round went past the station while it waited */
  passedOver: number;
  /** the wait in rounds of the median round period (null when no round was seen) */
  rounds: number | null;
  starved: boolean;
}

/** A place where the server went past a waiting station. */
export interface SkippedVisit {
  station: number;
  /** when the server left the station before it in the round (seconds) */
  at: number;
  /** the round it happened in (index into the rounds) */
  round: number;
}

export interface StationService {
  station: number;
  /** frames from the station, and from the server to it */
  framesFrom: number;
  framesTo: number;
  visits: number;
  /** request line up → served, for the waits that were served */
  serviceDelay: DurationStats | null;
  /** round-trip times of its answered exchanges */
  roundTrip: DurationStats | null;
  /** between the starts of consecutive visits */
  betweenVisits: DurationStats | null;
  timePerVisit: DurationStats | null;
  /** the longest wait, served or not; null without request-line edges */
  longestWait: Wait | null;
  waits: number;
  /** waits that ended without service (line dropped, capture ended) */
  unserved: number;
  skipped: number;
  starved: number;
  exchanges: Record<ExchangeOutcome, number>;
  /** frames of the station the server was not visiting it for (contention, or a capture starting mid-visit) */
  outsideVisits: number;
}

export interface ServerRounds {
  /** station addresses in the order the server visits them */
  order: number[];
  visits: number;
  rounds: number;
  /** between the starts of consecutive rounds */
  roundPeriod: DurationStats | null;
  timePerVisit: DurationStats | null;
  /** share of visit-to-visit steps that went to the next station in the order (1 for a server polling everyone) */
  stepsInOrder: number | null;
}

export interface ServiceReport {
  stations: StationService[];
  server: ServerRounds;
  /** waits passed over `starveAfterRounds` times or more, longest first */
  starved: Wait[];
  skipped: SkippedVisit[];
  starveAfterRounds: number;
  /** true when any request-line edge was seen (service delays need them) */
  requestLines: boolean;
}

/** The schedule view's data: one lane per station and the server's visits above them. Seconds. */
export interface Schedule {
  from: number;
  to: number;
  /** lane order: the server's visiting order, then stations it never visited */
  stations: number[];
  lanes: ScheduleLane[];
  /** the server's visits; code = lane index; ids are visit numbers */
  visits: SpanColumns;
  /** round of each visit */
  visitRound: Int32Array;
  /** start of each round */
  roundStarts: Float64Array;
  skipped: SkippedVisit[];
}

export interface ScheduleLane {
  station: number;
  /** request line high periods */
  requestLine: SpanColumns;
  /** the station's frames; code = FRAME_STATUS_CODES index */
  stationFrames: SpanColumns;
  /** the server's frames to it; code = FRAME_STATUS_CODES index */
  serverFrames: SpanColumns;
  /** exchanges from request to answer; code = OUTCOME_CODES index; id = exchange id */
  exchanges: SpanColumns;
  /** waits: code = WAIT_ENDS index, + 3 when starved */
  waits: SpanColumns;
}

const FROM_SERVER = 1;
const GOOD = 2;
const POLL = 4;
const FINAL = 8;
const STATUS_SHIFT = 4;
const statusCode = (s: FrameStatus) => Math.max(0, FRAME_STATUS_CODES.indexOf(s));

export class LineTiming {
  private readonly index = new Map<number, number>();
  private readonly addresses: number[] = [];
  // frames, as columns grown together (one capacity check per frame)
  private fFirst = new Float64Array(1024);
  private fLast = new Float64Array(1024);
  private fId = new Float64Array(1024);
  private fStation = new Int32Array(1024);
  /** direction and P/F flags in the low bits, status code above them */
  private fFlags = new Int32Array(1024);
  private fn = 0;
  // request-line edges
  private readonly eAt = new Float64List();
  private readonly eStation = new Int32List();
  private readonly eRising = new Int32List();
  // exchanges
  private readonly xFirst = new Float64List();
  private readonly xEnd = new Float64List();
  private readonly xStation = new Int32List();
  private readonly xOutcome = new Int32List();
  private readonly xRtt = new Float64List();
  private readonly xId = new Float64List();
  private readonly unit: number;
  private readonly starveAfter: number;
  private lastAddress = -1;
  private lastIndex = -1;

  constructor(options: LineTimingOptions) {
    this.unit = options.secondsPerUnit;
    this.starveAfter = Math.max(1, options.starveAfterRounds ?? 2);
  }

  private stationIndex(address: number): number {
    if (address === this.lastAddress) return this.lastIndex;
    let i = this.index.get(address);
    if (i === undefined) {
      i = this.addresses.length;
      this.index.set(address, i);
      this.addresses.push(address);
    }
    this.lastAddress = address;
    this.lastIndex = i;
    return i;
  }

  private grow(): void {
    const size = this.fFirst.length * 2;
    const f64 = (a: Float64Array) => {
      const b = new Float64Array(size);
      b.set(a);
      return b;
    };
    const i32 = (a: Int32Array) => {
      const b = new Int32Array(size);
      b.set(a);
      return b;
    };
    this.fFirst = f64(this.fFirst);
    this.fLast = f64(this.fLast);
    this.fId = f64(this.fId);
    this.fStation = i32(this.fStation);
    this.fFlags = i32(this.fFlags);
  }

  frame(f: TimingFrame): void {
    const n = this.fn;
    if (n === this.fFirst.length) this.grow();
    const good = f.status === 'ok';
    let flags = f.direction === 'from-server' ? FROM_SERVER : 0;
    if (good) flags |= GOOD;
    if (good && f.pf && f.kind === 'S' && f.direction === 'from-server') flags |= POLL;
    if (good && f.pf && f.direction === 'to-server') flags |= FINAL;
    this.fFirst[n] = f.first;
    this.fLast[n] = f.last;
    this.fId[n] = f.id ?? -1;
    this.fStation[n] = this.stationIndex(f.station);
    this.fFlags[n] = flags | ((good ? 0 : statusCode(f.status)) << STATUS_SHIFT);
    this.fn = n + 1;
  }

  /** the station's request line rose (`rising`) or fell at `at` */
  requestLine(station: number, rising: boolean, at: number): void {
    this.eAt.push(at);
    this.eStation.push(this.stationIndex(station));
    this.eRising.push(rising ? 1 : 0);
  }

  exchange(x: TimingExchange): void {
    this.xFirst.push(x.first);
    this.xEnd.push(x.end);
    this.xStation.push(this.stationIndex(x.station));
    this.xOutcome.push(OUTCOME_CODES.indexOf(x.outcome));
    this.xRtt.push(x.rttSeconds ?? NaN);
    this.xId.push(x.id ?? -1);
  }

  finish(): { service: ServiceReport; schedule: Schedule } {
    return new Finisher(this.snapshot(), this.unit, this.starveAfter).run();
  }

  private snapshot(): Input {
    return {
      addresses: this.addresses,
      frames: { first: this.fFirst, last: this.fLast, station: this.fStation, flags: this.fFlags, id: this.fId, n: this.fn },
      edges: { at: this.eAt.data, station: this.eStation.data, rising: this.eRising.data, n: this.eAt.n },
      exchanges: { first: this.xFirst.data, end: this.xEnd.data, station: this.xStation.data, outcome: this.xOutcome.data, rtt: this.xRtt.data, id: this.xId.data, n: this.xFirst.n },
    };
  }
}

interface Input {
  addresses: number[];
  frames: { first: Float64Array; last: Float64Array; station: Int32Array; flags: Int32Array; id: Float64Array; n: number };
  edges: { at: Float64Array; station: Int32Array; rising: Int32Array; n: number };
  exchanges: { first: Float64Array; end: Float64Array; station: Int32Array; outcome: Int32Array; rtt: Float64Array; id: Float64Array; n: number };
}

interface RawWait {
  station: number;
  rise: number;
  end: number;
  ended: WaitEnd;
  servedBy: number;
  /** visits opened before the rise (the last one is the visit the server was in or had just left) */
  visitsBefore: number;
  /** visits opened up to the end of the wait (the served frame's visit included) */
  visitsUpTo: number;
}

/** Sorted order of a typed array's first n entries (identity when already in order, the usual case). */
function orderOf(values: Float64Array, n: number): Uint32Array {
  const order = new Uint32Array(n);
  let sorted = true;
  for (let i = 0; i < n; i++) {
    order[i] = i;
    if (i > 0 && values[i] < values[i - 1]) sorted = false;
  }
  if (!sorted) order.set(Array.from(order).sort((a, b) => values[a] - values[b] || a - b));
  return order;
}

class Finisher {
  private readonly n: number;
  // visits
  private readonly vStart = new Float64List(256);
  private readonly vEnd = new Float64List(256);
  private readonly vStation = new Int32List(256);
  private readonly waits: RawWait[] = [];
  private readonly outside: Int32Array;
  private readonly framesFrom: Int32Array;
  private readonly framesTo: Int32Array;
  private captureEnd = 0;

  constructor(
    private readonly input: Input,
    private readonly unit: number,
    private readonly starveAfter: number,
  ) {
    this.n = input.addresses.length;
    this.outside = new Int32Array(this.n);
    this.framesFrom = new Int32Array(this.n);
    this.framesTo = new Int32Array(this.n);
  }

  run(): { service: ServiceReport; schedule: Schedule } {
    this.walk();
    const order = this.visitOrder();
    const pos = new Int32Array(this.n).fill(-1);
    order.forEach((st, k) => (pos[st] = k));
    const rounds = this.rounds(pos, order.length);
    const waits = this.resolveWaits(pos, order.length, rounds);
    return { service: this.report(order, pos, rounds, waits), schedule: this.schedule(order, rounds, waits) };
  }

  /** frames and request-line edges in time order → visits and waits */
  private walk(): void {
    const { frames: f, edges: e } = this.input;
    const fOrder = orderOf(f.first, f.n);
    const eOrder = orderOf(e.at, e.n);
    const waitFrom = new Float64Array(this.n).fill(-1);
    const waitVisits = new Int32Array(this.n);
    const rose = new Uint8Array(this.n);
    let cur = -1;
    let curHadFinal = false;
    let k = 0;
    const visits = this.vStart;
    const closeWait = (st: number, end: number, ended: WaitEnd, servedBy: number, visitsUpTo: number) => {
      this.waits.push({ station: st, rise: waitFrom[st], end, ended, servedBy, visitsBefore: waitVisits[st], visitsUpTo });
      waitFrom[st] = -1;
    };
    const edge = (j: number) => {
      const st = e.station[j];
      if (e.rising[j]) {
        rose[st] = 1;
        if (waitFrom[st] < 0) {
          waitFrom[st] = e.at[j];
          waitVisits[st] = visits.n;
        }
      } else if (waitFrom[st] >= 0) closeWait(st, e.at[j], 'withdrawn', -1, visits.n);
    };
    for (let i = 0; i < f.n; i++) {
      const x = fOrder[i];
      const t = f.first[x];
      // an edge at the same time as a frame comes first
      while (k < e.n && e.at[eOrder[k]] <= t) edge(eOrder[k++]);
      const st = f.station[x];
      const flags = f.flags[x];
      const last = f.last[x];
      if (last > this.captureEnd) this.captureEnd = last;
      if (flags & FROM_SERVER) {
        this.framesTo[st]++;
        const fresh = cur !== st || rose[st] === 1 || ((flags & POLL) !== 0 && curHadFinal);
        rose[st] = 0;
        if (fresh) {
          this.vStart.push(t);
          this.vEnd.push(last);
          this.vStation.push(st);
          cur = st;
          curHadFinal = false;
        } else if (last > this.vEnd.data[this.vEnd.n - 1]) this.vEnd.data[this.vEnd.n - 1] = last;
        if (waitFrom[st] >= 0) closeWait(st, t, 'served', f.id[x], visits.n);
      } else {
        this.framesFrom[st]++;
        if (cur === st) {
          if (last > this.vEnd.data[this.vEnd.n - 1]) this.vEnd.data[this.vEnd.n - 1] = last;
          if (flags & FINAL) curHadFinal = true;
        } else this.outside[st]++;
      }
    }
    while (k < e.n) edge(eOrder[k++]);
    for (let st = 0; st < this.n; st++) if (waitFrom[st] >= 0) closeWait(st, Math.max(this.captureEnd, waitFrom[st]), 'capture-ended', -1, visits.n);
  }

  /** the server's visiting order: most visited first, then the most frequent next station each time */
  private visitOrder(): number[] {
    const n = this.n;
    const vs = this.vStation.data;
    const count = new Int32Array(n);
    const firstSeen = new Int32Array(n).fill(-1);
    const next = new Int32Array(n * n);
    for (let i = 0; i < this.vStation.n; i++) {
      count[vs[i]]++;
      if (firstSeen[vs[i]] < 0) firstSeen[vs[i]] = i;
      if (i > 0 && vs[i] !== vs[i - 1]) next[vs[i - 1] * n + vs[i]]++;
    }
    const visited = [...Array(n).keys()].filter((s) => count[s] > 0);
    if (visited.length === 0) return [];
    const busier = (a: number, b: number) => count[b] - count[a] || firstSeen[a] - firstSeen[b];
    const order = [visited.sort(busier)[0]];
    const placed = new Uint8Array(n);
    placed[order[0]] = 1;
    while (order.length < visited.length) {
      const at = order[order.length - 1];
      let best = -1;
      for (const s of visited) if (!placed[s] && next[at * n + s] > 0 && (best < 0 || next[at * n + s] > next[at * n + best] || (next[at * n + s] === next[at * n + best] && busier(s, best) < 0))) best = s;
      if (best < 0) best = visited.find((s) => !placed[s])!;
      placed[best] = 1;
      order.push(best);
    }
    return order;
  }

  /** round of each visit and the start of each round: a round ends where the visits wrap around the order */
  private rounds(pos: Int32Array, m: number): { of: Int32Array; starts: Float64Array } {
    const v = this.vStation;
    const of = new Int32Array(v.n);
    const starts = new Float64List();
    if (v.n > 0) starts.push(this.vStart.data[0]);
    for (let i = 1; i < v.n; i++) {
      const wrapped = m > 0 && pos[v.data[i]] <= pos[v.data[i - 1]];
      of[i] = of[i - 1] + (wrapped ? 1 : 0);
      if (wrapped) starts.push(this.vStart.data[i]);
    }
    return { of, starts: starts.toArray() };
  }

  /** passes over each waiting station, and the skipped visits they make */
  private resolveWaits(pos: Int32Array, m: number, rounds: { of: Int32Array; starts: Float64Array }): { waits: Wait[]; skipped: SkippedVisit[] } {
    const vs = this.vStation.data;
    const vEnd = this.vEnd.data;
    const skipped: SkippedVisit[] = [];
    const periods = new Float64Array(Math.max(0, rounds.starts.length - 1));
    for (let i = 1; i < rounds.starts.length; i++) periods[i - 1] = rounds.starts[i] - rounds.starts[i - 1];
    const median = durationStats(periods, periods.length, this.unit)?.median ?? null;
    const waits = this.waits.map((w): Wait => {
      const s = pos[w.station];
      let passes = 0;
      // steps from the visit the server was in (or had just left) at the rise to the last visit
      // opened before the wait ended; for a served wait that last one is the station's own
      const from = Math.max(0, w.visitsBefore - 1);
      for (let i = from; i + 1 < w.visitsUpTo; i++) {
        // the station must have been waiting when the server left visit i
        if (w.rise > vEnd[i]) continue;
        const a = pos[vs[i]];
        const b = pos[vs[i + 1]];
        let passed: boolean;
        if (s < 0) passed = rounds.of[i + 1] > rounds.of[i];
        else if (a === s) passed = false;
        else {
          const da = (s - a + m) % m;
          const db = (b - a + m) % m;
          passed = a === b || da < db;
        }
        if (passed) {
          passes++;
          // before the wrap when its place comes after the station the server left, else after it
          const round = s >= 0 && s > a ? rounds.of[i] : rounds.of[i] + 1;
          skipped.push({ station: this.input.addresses[w.station], at: vEnd[i] * this.unit, round });
        }
      }
      const seconds = (w.end - w.rise) * this.unit;
      return {
        station: this.input.addresses[w.station],
        rise: w.rise * this.unit,
        end: w.end * this.unit,
        seconds,
        ended: w.ended,
        servedBy: w.servedBy >= 0 ? w.servedBy : null,
        passedOver: passes,
        rounds: median ? seconds / median : null,
        starved: passes >= this.starveAfter,
      };
    });
    return { waits, skipped: skipped.sort((a, b) => a.at - b.at) };
  }

  private report(order: number[], pos: Int32Array, rounds: { of: Int32Array; starts: Float64Array }, w: { waits: Wait[]; skipped: SkippedVisit[] }): ServiceReport {
    const n = this.n;
    const addr = this.input.addresses;
    const v = this.vStation;
    const u = this.unit;
    // per station lists
    const starts: Float64List[] = Array.from({ length: n }, () => new Float64List(16));
    const lengths: Float64List[] = Array.from({ length: n }, () => new Float64List(16));
    const all = new Float64Array(v.n);
    for (let i = 0; i < v.n; i++) {
      const st = v.data[i];
      starts[st].push(this.vStart.data[i]);
      const len = this.vEnd.data[i] - this.vStart.data[i];
      lengths[st].push(len);
      all[i] = len;
    }
    let inOrder = 0;
    let steps = 0;
    for (let i = 1; i < v.n; i++) {
      if (v.data[i] === v.data[i - 1]) continue;
      steps++;
      if ((pos[v.data[i - 1]] + 1) % order.length === pos[v.data[i]]) inOrder++;
    }
    const x = this.input.exchanges;
    const rtts: Float64List[] = Array.from({ length: n }, () => new Float64List(16));
    const outcomes = Array.from({ length: n }, () => ({ answered: 0, retried: 0, unanswered: 0 }));
    for (let i = 0; i < x.n; i++) {
      const st = x.station[i];
      const o = OUTCOME_CODES[x.outcome[i]];
      if (o) outcomes[st][o]++;
      if (!Number.isNaN(x.rtt[i])) rtts[st].push(x.rtt[i]);
    }
    const byStation = new Map<number, Wait[]>();
    for (const wt of w.waits) (byStation.get(wt.station) ?? byStation.set(wt.station, []).get(wt.station)!).push(wt);
    const skippedBy = new Map<number, number>();
    for (const s of w.skipped) skippedBy.set(s.station, (skippedBy.get(s.station) ?? 0) + 1);
    const stations: StationService[] = [];
    const laneOrder = [...order, ...[...Array(n).keys()].filter((s) => pos[s] < 0).sort((a, b) => addr[a] - addr[b])];
    for (const st of laneOrder) {
      const ws = byStation.get(addr[st]) ?? [];
      const served = ws.filter((wt) => wt.ended === 'served');
      const delays = Float64Array.from(served, (wt) => wt.seconds);
      const s = starts[st];
      const gaps = new Float64Array(Math.max(0, s.n - 1));
      for (let i = 1; i < s.n; i++) gaps[i - 1] = s.data[i] - s.data[i - 1];
      stations.push({
        station: addr[st],
        framesFrom: this.framesFrom[st],
        framesTo: this.framesTo[st],
        visits: s.n,
        serviceDelay: durationStats(delays),
        roundTrip: durationStats(rtts[st].data, rtts[st].n),
        betweenVisits: durationStats(gaps, gaps.length, u),
        timePerVisit: durationStats(lengths[st].data, lengths[st].n, u),
        longestWait: ws.reduce<Wait | null>((m, wt) => (m === null || wt.seconds > m.seconds ? wt : m), null),
        waits: ws.length,
        unserved: ws.length - served.length,
        skipped: skippedBy.get(addr[st]) ?? 0,
        starved: ws.filter((wt) => wt.starved).length,
        exchanges: outcomes[st],
        outsideVisits: this.outside[st],
      });
    }
    const periods = new Float64Array(Math.max(0, rounds.starts.length - 1));
    for (let i = 1; i < rounds.starts.length; i++) periods[i - 1] = rounds.starts[i] - rounds.starts[i - 1];
    return {
      stations,
      server: {
        order: order.map((s) => addr[s]),
        visits: v.n,
        rounds: rounds.starts.length,
        roundPeriod: durationStats(periods, periods.length, u),
        timePerVisit: durationStats(all, all.length, u),
        stepsInOrder: steps > 0 ? inOrder / steps : null,
      },
      starved: w.waits.filter((wt) => wt.starved).sort((a, b) => b.seconds - a.seconds),
      skipped: w.skipped,
      starveAfterRounds: this.starveAfter,
      requestLines: this.input.edges.n > 0,
    };
  }

  private schedule(order: number[], rounds: { of: Int32Array; starts: Float64Array }, w: { waits: Wait[]; skipped: SkippedVisit[] }): Schedule {
    const n = this.n;
    const u = this.unit;
    const addr = this.input.addresses;
    const pos = new Map<number, number>();
    const laneOrder = [...order, ...[...Array(n).keys()].filter((s) => !order.includes(s)).sort((a, b) => addr[a] - addr[b])];
    laneOrder.forEach((st, k) => pos.set(st, k));
    const lanes = laneOrder.map(() => ({ line: new SpanBuilder(), from: new SpanBuilder(), to: new SpanBuilder(), ex: new SpanBuilder(), waits: new SpanBuilder() }));
    const f = this.input.frames;
    const laneOf = Int32Array.from({ length: n }, (_, st) => pos.get(st)!);
    let from = Infinity;
    let to = -Infinity;
    for (let i = 0; i < f.n; i++) {
      const lane = lanes[laneOf[f.station[i]]];
      const flags = f.flags[i];
      const b = flags & FROM_SERVER ? lane.to : lane.from;
      b.add(f.first[i] * u, f.last[i] * u, flags >> STATUS_SHIFT, f.id[i]);
      if (f.first[i] < from) from = f.first[i];
      if (f.last[i] > to) to = f.last[i];
    }
    // request-line high periods from the edges, per station in time order
    const e = this.input.edges;
    const eOrder = orderOf(e.at, e.n);
    const high = new Float64Array(n).fill(NaN);
    for (let k = 0; k < e.n; k++) {
      const j = eOrder[k];
      const st = e.station[j];
      if (e.rising[j]) {
        if (Number.isNaN(high[st])) high[st] = e.at[j];
      } else if (!Number.isNaN(high[st])) {
        lanes[pos.get(st)!].line.add(high[st] * u, e.at[j] * u, 0);
        high[st] = NaN;
      }
      if (e.at[j] < from) from = e.at[j];
      if (e.at[j] > to) to = e.at[j];
    }
    const x = this.input.exchanges;
    for (let i = 0; i < x.n; i++) {
      lanes[pos.get(x.station[i])!].ex.add(x.first[i] * u, x.end[i] * u, Math.max(0, x.outcome[i]), x.id[i]);
      if (x.first[i] < from) from = x.first[i];
      if (x.end[i] > to) to = x.end[i];
    }
    const end = Number.isFinite(to) ? to : 0;
    for (let st = 0; st < n; st++) if (!Number.isNaN(high[st])) lanes[pos.get(st)!].line.add(high[st] * u, Math.max(end, high[st]) * u, 0);
    const laneOfAddress = new Map(laneOrder.map((st, k) => [addr[st], k]));
    for (const wt of w.waits) lanes[laneOfAddress.get(wt.station)!].waits.add(wt.rise, wt.end, WAIT_ENDS.indexOf(wt.ended) + (wt.starved ? 3 : 0), wt.servedBy ?? -1);
    const visits = new SpanBuilder();
    for (let i = 0; i < this.vStation.n; i++) visits.add(this.vStart.data[i] * u, this.vEnd.data[i] * u, pos.get(this.vStation.data[i])!, i);
    return {
      from: Number.isFinite(from) ? from * u : 0,
      to: Number.isFinite(to) ? to * u : 0,
      stations: laneOrder.map((st) => addr[st]),
      lanes: laneOrder.map((st, k) => ({
        station: addr[st],
        requestLine: lanes[k].line.build(),
        stationFrames: lanes[k].from.build(),
        serverFrames: lanes[k].to.build(),
        exchanges: lanes[k].ex.build(),
        waits: lanes[k].waits.build(),
      })),
      visits: visits.build(),
      visitRound: rounds.of,
      roundStarts: rounds.starts.map((s) => s * u),
      skipped: w.skipped,
    };
  }
}
