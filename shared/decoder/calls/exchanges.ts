// Streaming request/response pairing. Frames arrive in time order (as the decoder emits them);
// per station, a request (a call on the to-server link) opens an exchange and the response
// (a call on the from-server link of the same station) closes it:
// - by tag when the map has a tag field (call code must agree too), else in order per call code;
// - the same call and tag sent again before an answer is a retry of the same exchange;
// - no response within `timeoutSeconds` of the last send: the exchange is unanswered (a send of
//   the same call and tag after that opens a new exchange);
// - a second response with the tag of an exchange already answered (the server answered a
//   retry too) joins that exchange as another response.
// Round-trip time runs from the last bit of the send the server answered (the latest send
// before the first response) to the first bit of that response, in seconds.
// Service delay (where the station's RTS line was captured): from RTS rising to the server's
// first frame to that station afterwards, whatever kind of frame it is (a poll, usually).
// Only readable frames carry calls: a request that arrived damaged (bad FCS) and was sent again
// shows as one send, so such an exchange is 'answered', not 'retried' (the fault desk shows the
// damaged frame). A damaged (bad-FCS) I frame from the server while a request of that station
// waits, followed by a retry of that request, is the exchange's damaged answer: the reason it
// was retried. Its call decode (unreliable: the bytes are damaged) only picks the exchange when
// several wait; with one waiting it is that one's.
// compareExchanges (below) sets two captures of the same rig side by side at exchange level.
import type { DecodedFrame, LineEvent } from '../types';

/** What the call layer reads of a frame: a stored frame rebuilt from its row is enough. */
export type CallLayerFrame = Pick<DecodedFrame, 'link' | 'seq' | 'firstSample' | 'lastSample' | 'status' | 'bytes' | 'decode'>;
import { decodeFrameCall, type DecodedCall } from './apply';
import type { FieldMap } from './field-map';

export type LinkDirection = 'to-server' | 'from-server';

/** Identifies a frame: its link and its 0-based order on that link (as the decoder numbers them). */
export interface FrameRef {
  link: string;
  seq: number;
}

/** A frame as the pairing sees it. `call` is null for frames without a call (S/U frames, damaged frames). */
export interface CallFrame {
  ref: FrameRef;
  station: number;
  direction: LinkDirection;
  firstSample: number;
  lastSample: number;
  call: DecodedCall | null;
  /** a bad-FCS I frame: its bytes read as a call anyway (values unreliable), else null */
  damagedCall?: DecodedCall | null;
}

export const EXCHANGE_OUTCOMES = ['answered', 'retried', 'unanswered'] as const;
export type ExchangeOutcome = (typeof EXCHANGE_OUTCOMES)[number];

export interface Exchange {
  station: number;
  /** the first send of the request */
  request: FrameRef;
  requestCall: DecodedCall;
  /** later sends of the same call and tag before an answer */
  retries: FrameRef[];
  responses: FrameRef[];
  /** bad-FCS answers from the server that the station answered with a retry: why it was retried */
  damagedResponses: FrameRef[];
  /** the first response's call decode */
  responseCall: DecodedCall | null;
  callCode: number | null;
  callName: string | null;
  tag: number | null;
  /** from the request; for calls that only say it in the response (boot load) the response's */
  recordNumber: number | null;
  fileName: string | null;
  status: number | null;
  statusMeaning: string | null;
  /** sample of the first bit of the first send */
  firstSample: number;
  /** last bit of the send that was answered (or of the last send when unanswered) */
  answeredSendLastSample: number;
  /** first bit of the first response */
  responseFirstSample: number | null;
  rttSeconds: number | null;
  outcome: ExchangeOutcome;
  /** RTS rise → server's first frame, when an RTS rise came before this request */
  serviceDelaySeconds: number | null;
}

export interface ServiceDelay {
  station: number;
  riseSample: number;
  serverFrame: FrameRef;
  serverFirstSample: number;
  seconds: number;
}

export interface ExchangeOptions {
  samplePeriodSeconds: number;
  /** seconds without a response before a request counts as unanswered (default 0.5) */
  timeoutSeconds?: number;
  /** pair by the tag role (default true); false pairs in order per call code */
  byTag?: boolean;
}

export interface ExchangeSink {
  exchange(e: Exchange): void;
  /** a response no open request matches */
  orphan?(f: CallFrame): void;
  serviceDelay?(d: ServiceDelay): void;
}

/**
 * The answer timeout unless the rig sets one (common practice for polled file servers: half a
 * second before a station gives up on an answer); the rig schema and table default read it here.
 */
export const DEFAULT_TIMEOUT_SECONDS = 0.5;

interface Open {
  ex: Exchange;
  /** sample of the last bit of the latest send */
  lastSendEnd: number;
  /** last bit of the latest response, when answered */
  answeredAt: number | null;
  /** damaged answers since the latest send; they join the exchange when a retry follows */
  damaged: FrameRef[];
}

interface StationState {
  open: Open[];
  riseSample: number | null;
  /** a service delay measured and not yet given to an exchange */
  delay: ServiceDelay | null;
}

export class ExchangeTracker {
  private readonly stations = new Map<number, StationState>();
  private readonly timeout: number;
  private readonly period: number;
  private readonly byTag: boolean;

  constructor(
    options: ExchangeOptions,
    private readonly sink: ExchangeSink,
  ) {
    this.period = options.samplePeriodSeconds;
    this.timeout = (options.timeoutSeconds ?? DEFAULT_TIMEOUT_SECONDS) / options.samplePeriodSeconds;
    this.byTag = options.byTag ?? true;
  }

  private state(station: number): StationState {
    let s = this.stations.get(station);
    if (!s) this.stations.set(station, (s = { open: [], riseSample: null, delay: null }));
    return s;
  }

  /** The station's RTS line rose at `sample`. */
  rts(station: number, sample: number): void {
    this.state(station).riseSample = sample;
  }

  push(f: CallFrame): void {
    this.expire(f.firstSample);
    const st = this.state(f.station);
    if (f.direction === 'from-server' && st.riseSample !== null && f.firstSample >= st.riseSample) {
      const d: ServiceDelay = {
        station: f.station,
        riseSample: st.riseSample,
        serverFrame: f.ref,
        serverFirstSample: f.firstSample,
        seconds: (f.firstSample - st.riseSample) * this.period,
      };
      st.riseSample = null;
      st.delay = d;
      this.sink.serviceDelay?.(d);
    }
    const call = f.call;
    if (!call && f.damagedCall !== undefined && f.direction === 'from-server') {
      this.damagedAnswer(st, f);
      return;
    }
    if (!call || call.callCode === null) return;
    if (f.direction === 'to-server') this.request(st, f, call);
    else this.response(st, f, call);
  }

  private sameCall(ex: Exchange, call: DecodedCall): boolean {
    if (ex.callCode !== call.callCode) return false;
    if (this.byTag) return ex.tag === call.tag;
    return ex.requestCall.recordNumber === call.recordNumber && ex.requestCall.fileName === call.fileName;
  }

  private request(st: StationState, f: CallFrame, call: DecodedCall): void {
    const retryOf = st.open.find((o) => o.answeredAt === null && this.sameCall(o.ex, call));
    if (retryOf) {
      retryOf.ex.damagedResponses.push(...retryOf.damaged);
      retryOf.damaged = [];
      retryOf.ex.retries.push(f.ref);
      // a first send cut short that still checked good (a transmitter under-run) is made whole by its retry
      if (retryOf.ex.requestCall.truncated && !call.truncated) {
        retryOf.ex.requestCall = call;
        retryOf.ex.recordNumber = call.recordNumber;
        retryOf.ex.fileName = call.fileName;
      }
      retryOf.lastSendEnd = f.lastSample;
      retryOf.ex.answeredSendLastSample = f.lastSample;
      return;
    }
    // A new request with the tag of an answered exchange: that exchange is over.
    if (this.byTag) {
      for (const o of [...st.open]) if (o.answeredAt !== null && o.ex.tag === call.tag) this.close(st, o);
    }
    const delay = st.delay;
    st.delay = null;
    const ex: Exchange = {
      station: f.station,
      request: f.ref,
      requestCall: call,
      retries: [],
      responses: [],
      damagedResponses: [],
      responseCall: null,
      callCode: call.callCode,
      callName: call.callName,
      tag: call.tag,
      recordNumber: call.recordNumber,
      fileName: call.fileName,
      status: null,
      statusMeaning: null,
      firstSample: f.firstSample,
      answeredSendLastSample: f.lastSample,
      responseFirstSample: null,
      rttSeconds: null,
      outcome: 'unanswered',
      serviceDelaySeconds: delay ? delay.seconds : null,
    };
    st.open.push({ ex, lastSendEnd: f.lastSample, answeredAt: null, damaged: [] });
  }

  /** A bad-FCS I frame from the server: held by the waiting exchange it most likely answers. */
  private damagedAnswer(st: StationState, f: CallFrame): void {
    const waiting = st.open.filter((o) => o.answeredAt === null);
    const guess = f.damagedCall;
    const o =
      (guess && guess.callCode !== null ? waiting.find((x) => x.ex.callCode === guess.callCode && (!this.byTag || x.ex.tag === guess.tag)) : undefined) ??
      (waiting.length === 1 ? waiting[0] : undefined);
    if (o) o.damaged.push(f.ref);
  }

  private response(st: StationState, f: CallFrame, call: DecodedCall): void {
    const matches = (o: Open) => o.ex.callCode === call.callCode && (!this.byTag || o.ex.tag === call.tag);
    const o = st.open.find((x) => x.answeredAt === null && matches(x)) ?? st.open.find((x) => x.answeredAt !== null && matches(x));
    if (!o) {
      this.sink.orphan?.(f);
      return;
    }
    const ex = o.ex;
    o.damaged = [];
    ex.responses.push(f.ref);
    if (o.answeredAt === null) {
      ex.responseCall = call;
      ex.responseFirstSample = f.firstSample;
      ex.rttSeconds = (f.firstSample - ex.answeredSendLastSample) * this.period;
      ex.outcome = ex.retries.length > 0 ? 'retried' : 'answered';
      ex.status = call.status;
      ex.statusMeaning = call.statusMeaning;
      if (ex.recordNumber === null) ex.recordNumber = call.recordNumber;
      if (ex.fileName === null) ex.fileName = call.fileName;
    }
    o.answeredAt = f.lastSample;
  }

  /** Closes exchanges whose time is up at `sample`. */
  private expire(sample: number): void {
    for (const st of this.stations.values()) {
      for (const o of [...st.open]) {
        const since = o.answeredAt ?? o.lastSendEnd;
        if (sample - since > this.timeout) this.close(st, o);
      }
    }
  }

  private close(st: StationState, o: Open): void {
    st.open.splice(st.open.indexOf(o), 1);
    this.sink.exchange(o.ex);
  }

  finish(): void {
    for (const st of this.stations.values()) for (const o of [...st.open]) this.close(st, o);
  }
}

/** The parts of a capture's settings the call layer needs (shape of shared/schemas/captures.ts). */
export interface CallLayerSettings {
  links: { channel: string; direction: LinkDirection | 'unknown'; stationAddress?: number | null }[];
  handshake?: { channel: string; name: string; link?: string | null; stationAddress?: number | null }[];
}

/**
 * Link roles and RTS lines from capture settings: links of unknown direction are left out; a
 * handshake line named RTS belongs to the station it names (a multidrop line, where stations
 * share the data wires but each has its own RTS), else to the station of the link it is
 * attached to.
 */
export function callLayerRoles(settings: CallLayerSettings): { links: LinkRole[]; rts: { channel: string; station: number }[] } {
  const links: LinkRole[] = [];
  for (const l of settings.links) {
    if (l.direction === 'unknown') continue;
    links.push({ link: l.channel, direction: l.direction, station: l.stationAddress ?? undefined });
  }
  const rts: { channel: string; station: number }[] = [];
  for (const h of settings.handshake ?? []) {
    if (!/^rts$/i.test(h.name.trim())) continue;
    const station = h.stationAddress ?? (h.link ? settings.links.find((l) => l.channel === h.link)?.stationAddress : null);
    if (station !== undefined && station !== null) rts.push({ channel: h.channel, station });
  }
  return { links, rts };
}

/** How a capture's link relates to the rig: its direction and, when known, its station. */
export interface LinkRole {
  link: string;
  direction: LinkDirection;
  /** station address on this port; default: the frame's address octet */
  station?: number;
}

export interface CallLayerOptions {
  map: FieldMap;
  links: LinkRole[];
  /** handshake channels that are a station's RTS line */
  rts?: { channel: string; station: number }[];
  samplePeriodSeconds: number;
  timeoutSeconds?: number;
}

export interface CallLayerSink extends ExchangeSink {
  /** every frame on a known link with its call decode (null call for frames without one) */
  call?(f: CallFrame, frame: CallLayerFrame): void;
}

/**
 * The call-layer stage after the decoder: DecodedFrame and LineEvent in (time order), call
 * decodes, exchanges and service delays out. Frames on links not in `links` are ignored.
 */
export class CallLayer {
  private readonly tracker: ExchangeTracker;
  private readonly roles: Map<string, LinkRole>;
  private readonly rts: Map<string, number>;

  constructor(
    private readonly options: CallLayerOptions,
    private readonly sink: CallLayerSink,
  ) {
    const byTag = options.map.layouts.some((l) => l.fields.some((f) => f.role === 'tag'));
    this.tracker = new ExchangeTracker({ samplePeriodSeconds: options.samplePeriodSeconds, timeoutSeconds: options.timeoutSeconds, byTag }, sink);
    this.roles = new Map(options.links.map((l) => [l.link, l]));
    this.rts = new Map((options.rts ?? []).map((r) => [r.channel, r.station]));
  }

  frame(frame: CallLayerFrame): void {
    const role = this.roles.get(frame.link);
    if (!role) return;
    const station = role.station ?? frame.decode?.address;
    if (station === undefined) return;
    const direction = role.direction === 'to-server' ? 'request' : 'response';
    const call = decodeFrameCall(this.options.map, frame, direction);
    const cf: CallFrame = {
      ref: { link: frame.link, seq: frame.seq },
      station,
      direction: role.direction,
      firstSample: frame.firstSample,
      lastSample: frame.lastSample,
      call,
    };
    if (frame.status === 'bad-fcs' && frame.decode?.kind === 'I') cf.damagedCall = decodeFrameCall(this.options.map, frame, direction, true);
    this.sink.call?.(cf, frame);
    this.tracker.push(cf);
  }

  event(e: LineEvent): void {
    if (e.kind !== 'rise') return;
    const station = this.rts.get(e.channel);
    if (station !== undefined) this.tracker.rts(station, e.sample);
  }

  finish(): void {
    this.tracker.finish();
  }
}

/** Batch form for tests and small captures: exchanges sorted by their first send. */
export function pairExchanges(
  frames: DecodedFrame[],
  events: LineEvent[],
  options: CallLayerOptions,
): { exchanges: Exchange[]; orphans: CallFrame[]; serviceDelays: ServiceDelay[]; calls: CallFrame[] } {
  const exchanges: Exchange[] = [];
  const orphans: CallFrame[] = [];
  const serviceDelays: ServiceDelay[] = [];
  const calls: CallFrame[] = [];
  const layer = new CallLayer(options, {
    exchange: (e) => exchanges.push(e),
    orphan: (f) => orphans.push(f),
    serviceDelay: (d) => serviceDelays.push(d),
    call: (f) => calls.push(f),
  });
  // frames and events merged by sample; an event at the same sample as a frame comes first
  const items: { sample: number; frame?: DecodedFrame; event?: LineEvent }[] = [
    ...frames.map((f) => ({ sample: f.firstSample, frame: f })),
    ...events.map((e) => ({ sample: e.sample, event: e })),
  ];
  items.sort((a, b) => a.sample - b.sample || (a.event ? -1 : 0) - (b.event ? -1 : 0));
  for (const it of items) {
    if (it.frame) layer.frame(it.frame);
    else layer.event(it.event!);
  }
  layer.finish();
  exchanges.sort((a, b) => a.firstSample - b.firstSample);
  return { exchanges, orphans, serviceDelays, calls };
}

// ---- Compare: two captures of the same rig side by side at exchange level ----

export const COMPARISON_KINDS = ['same', 'answered-differently', 'outcome-differs', 'slower', 'faster', 'only-in-a', 'only-in-b'] as const;
export type ComparisonKind = (typeof COMPARISON_KINDS)[number];

/**
 * What compareExchanges reads of an exchange: an Exchange has it, and so has a stored exchange
 * row shaped to it (its answer as one field), with no decoder objects to forge.
 */
export interface ComparableExchange {
  station: number;
  callCode: number | null;
  callName: string | null;
  fileName: string | null;
  recordNumber: number | null;
  firstSample: number;
  rttSeconds: number | null;
  outcome: ExchangeOutcome;
  requestCall: { fileName: string | null; recordNumber: number | null };
  responseCall: { fields: readonly { id: string; role: string | null; display: string }[] } | null;
}

export interface ExchangeComparison<E extends ComparableExchange = Exchange> {
  station: number;
  callCode: number | null;
  callName: string | null;
  fileName: string | null;
  recordNumber: number | null;
  a: E | null;
  b: E | null;
  kind: ComparisonKind;
  /** b's round trip minus a's, when both were answered */
  rttDeltaSeconds: number | null;
}

export interface ComparisonSummary {
  matched: number;
  same: number;
  answeredDifferently: number;
  outcomeDiffers: number;
  slower: number;
  faster: number;
  onlyInA: number;
  onlyInB: number;
  meanRttA: number | null;
  meanRttB: number | null;
}

export interface CompareOptions {
  /** a round trip counts as slower/faster when it differs by more than this fraction (default 0.2) … */
  relative?: number;
  /** … and by more than this many seconds (default 0.0002) */
  absolute?: number;
}

/** What identifies "the same request" in two captures: station, call, file and record, in order of occurrence. */
function requestKey(e: ComparableExchange): string {
  return `${e.station}|${e.callCode}|${e.requestCall.fileName ?? ''}|${e.requestCall.recordNumber ?? ''}`;
}

/** The answer without its tag: status and every other response field's value. */
function answerSignature(e: ComparableExchange): string | null {
  const r = e.responseCall;
  if (!r) return null;
  return r.fields
    .filter((f) => f.role !== 'tag')
    .map((f) => `${f.id}=${f.display}`)
    .join('|');
}

/**
 * Pairs the k-th occurrence of a request (same station, call, file, record) in capture A with the
 * k-th in capture B, then says how B's answer differs: a different answer, a different outcome
 * (answered vs unanswered), slower or faster, or present in one capture only.
 */
export function compareExchanges<E extends ComparableExchange>(
  a: readonly E[],
  b: readonly E[],
  options: CompareOptions = {},
): { rows: ExchangeComparison<E>[]; summary: ComparisonSummary } {
  const relative = options.relative ?? 0.2;
  const absolute = options.absolute ?? 0.0002;
  const byKey = (list: readonly E[]) => {
    const m = new Map<string, E[]>();
    for (const e of [...list].sort((x, y) => x.firstSample - y.firstSample)) {
      const k = requestKey(e);
      const l = m.get(k);
      if (l) l.push(e);
      else m.set(k, [e]);
    }
    return m;
  };
  const ma = byKey(a);
  const mb = byKey(b);
  const rows: ExchangeComparison<E>[] = [];
  const row = (ea: E | null, eb: E | null): ExchangeComparison<E> => {
    const e = (ea ?? eb)!;
    let kind: ComparisonKind;
    let delta: number | null = null;
    if (!eb) kind = 'only-in-a';
    else if (!ea) kind = 'only-in-b';
    else if ((ea.outcome === 'unanswered') !== (eb.outcome === 'unanswered')) kind = 'outcome-differs';
    else if (answerSignature(ea) !== answerSignature(eb)) kind = 'answered-differently';
    else {
      kind = 'same';
      if (ea.rttSeconds !== null && eb.rttSeconds !== null) {
        delta = eb.rttSeconds - ea.rttSeconds;
        if (Math.abs(delta) > absolute && Math.abs(delta) > relative * ea.rttSeconds) kind = delta > 0 ? 'slower' : 'faster';
      }
    }
    if (delta === null && ea?.rttSeconds != null && eb?.rttSeconds != null) delta = eb.rttSeconds - ea.rttSeconds;
    return { station: e.station, callCode: e.callCode, callName: e.callName, fileName: e.fileName, recordNumber: e.recordNumber, a: ea, b: eb, kind, rttDeltaSeconds: delta };
  };
  for (const [k, la] of ma) {
    const lb = mb.get(k) ?? [];
    for (let i = 0; i < Math.max(la.length, lb.length); i++) rows.push(row(la[i] ?? null, lb[i] ?? null));
  }
  for (const [k, lb] of mb) if (!ma.has(k)) for (const e of lb) rows.push(row(null, e));
  // in the order the requests happened (A's time, else B's)
  rows.sort((x, y) => x.station - y.station || (x.a?.firstSample ?? x.b!.firstSample) - (y.a?.firstSample ?? y.b!.firstSample));
  const count = (k: ComparisonKind) => rows.filter((r) => r.kind === k).length;
  const mean = (xs: (number | null)[]) => {
    const v = xs.filter((x): x is number => x !== null);
    return v.length ? v.reduce((s, x) => s + x, 0) / v.length : null;
  };
  return {
    rows,
    summary: {
      matched: rows.filter((r) => r.a && r.b).length,
      same: count('same'),
      answeredDifferently: count('answered-differently'),
      outcomeDiffers: count('outcome-differs'),
      slower: count('slower'),
      faster: count('faster'),
      onlyInA: count('only-in-a'),
      onlyInB: count('only-in-b'),
      meanRttA: mean(a.map((e) => e.rttSeconds)),
      meanRttB: mean(b.map((e) => e.rttSeconds)),
    },
  };
}
