// Timing episodes for tests, benchmarks and the demo: a file server that serves its stations in
// turn (round robin), on per-port wiring or a multidrop line, with the timing races injected on
// purpose — a transmitter under-run at a chosen octet (ended with the FCS or with an abort, the
// rest following at once as a fragment), a slow server that passes a waiting station by for N
// rounds, a station whose answers come late — and what a decoder must find: every frame, every
// visit and round, every wait with its service delay, every skipped visit and every under-run.
//
// The server (SDLC normal response mode, modulo 8; IBM SDLC concepts, from memory) goes round its
// stations in order. At each one it looks at the request line: a station that raised it is
// polled (RR with P), answers with its request (I with F), gets the answer (I with P) and
// acknowledges it (RR with F); a station with nothing to ask is polled anyway when `pollIdle`
// (it answers RR with F), else the server moves on without a frame. Moving on takes `stepTime`.
// The first round sets each link up (SNRM, UA). A station raises its request line when its call
// is due (not before its link is up) and drops it after sending the request.
//
// Races:
// - under-run in a request: the request is cut after `atOctet` octets; the server cannot read
//   it, ignores it and moves on; the station, hearing nothing, raises its request line again
//   `retryAfter` later and sends the whole frame (same N(S)).
// - under-run in an answer: the station cannot read it and asks again `retryAfter` later (same
//   call and tag, next N(S)); the server answers again.
// - a skip: when the server reaches a station that has waited since before it left the station
//   before, it passes it by, `rounds` times in a row. A round nothing on the wire shows (no one
//   else visited) cannot be counted by a decoder, so skips are for lines where the server polls.
// - a late station: it takes `answerDelay` longer to answer every frame of the server.
// - a receiver over-run in the server: a request that crossed the line intact is lost (no answer,
//   the station asks again later with the same N(S)) or answered with an error status (the
//   station asks again at once).
//
// Frames are placed on whole flags (a gap between frames is a whole number of fill flags), so a
// frame starts up to 7 bits later than asked; the episode reports where each one really is.
import { fcs16 } from '../fcs';
import type { ExpectedExchange, SessionLink, ScriptFrame } from './calls';
import { control } from './calls';
import { encodeLineBits, frameLineSpan, type FrameFaults, type LineItem } from './line-bits';
import type { HandshakeLine } from './waveform';
import type { LoggedFrame } from './writers/framelog';
import type { LinkDirection } from '../calls/exchanges';

export interface Underrun {
  /** octets of the frame (address first) that go out before the transmitter runs dry */
  atOctet: number;
  /** how the controller ends the frame: the FCS over what it sent, or an abort */
  end: 'fcs' | 'abort';
  /** the octets left over follow at once as a frame of their own (default true) */
  fragment?: boolean;
  /** 1s of the abort (default 7) */
  abortOnes?: number;
}

export interface EpisodeCall {
  /** seconds from the start when the station wants to send it (it waits for its previous call) */
  at: number;
  /** information field of the request */
  request: Uint8Array;
  /** information field of the answer; null: the server acknowledges the frame but never answers */
  response: Uint8Array | null;
  /** seconds from the request's last bit to the answer's first */
  serverDelay: number;
  /** the station's transmitter runs dry in the first send of the request */
  underrun?: Underrun;
  /** the server's transmitter runs dry in the first send of the answer */
  responseUnderrun?: Underrun;
  /** unanswered calls: sends in all before the station gives up (default 2) */
  sends?: number;
  /**
   * The server's receiver over-runs on this request although it crossed the line intact: it loses
   * the first `lost` sends (no answer; the station asks again `retryAfter` later, same N(S)), and/or
   * answers the first readable one with `errorStatus` (the station asks again at once).
   */
  overrun?: { lost?: number; errorStatus?: number };
}

export interface EpisodeStation {
  address: number;
  /** per-port wiring: link-name prefix (p1 → p1_txd, p1_rxd, p1_rts); multidrop: the request line is `${port}_rts` */
  port: string;
  /** the station has a request line the capture records (default true) */
  requestLine?: boolean;
  /** seconds the station takes, beyond the usual turn-around, to answer each frame of the server */
  answerDelay?: number;
  calls: EpisodeCall[];
}

export interface EpisodeScript {
  bitRate: number;
  /** per-port: a pair of data lines per station; multidrop: `txd` (stations → server) and `rxd` shared by all */
  wiring: 'per-port' | 'multidrop';
  /** in the server's visiting order */
  stations: EpisodeStation[];
  /** seconds from the start to the server's first frame (default 0.0002) */
  start?: number;
  /** seconds the server takes to move on to the next station (default 0.00002) */
  stepTime?: number;
  /** poll stations with nothing to ask (default true) */
  pollIdle?: boolean;
  /** the slow server passes `station` by `rounds` times in a row, from its first wait that begins at or after `after` seconds */
  skips?: { station: number; rounds: number; after?: number }[];
  /** seconds a station waits for an answer before it asks again (default 0.003) */
  retryAfter?: number;
  /** bits either side takes to turn around (default 40) */
  turnBits?: number;
  /** rounds the server keeps going after the last call (default 2) */
  tailRounds?: number;
  /** stop after this many rounds whatever is left (default 1 000 000) */
  maxRounds?: number;
}

export type EpisodeRole = 'setup' | 'poll' | 'request' | 'response' | 'ack' | 'idle' | 'fragment';

export interface EpisodeFrame extends ScriptFrame {
  /** what a decoder finds: an under-run ended by an abort is 'abort', everything else 'ok' */
  status: 'ok' | 'abort';
  role: EpisodeRole;
  /** the station the frame is from or to */
  station: number;
  faults?: FrameFaults;
  /** for a fragment: shared flag with the frame before it */
  follows?: boolean;
}

export interface EpisodeLink extends Omit<SessionLink, 'frames' | 'station'> {
  /** null on a multidrop line (the address octet says) */
  station: number | null;
  frames: EpisodeFrame[];
}

export interface EncodedVisit {
  station: number;
  round: number;
  /** first bit of the server's first frame, one past the last bit of the visit's last frame */
  startBit: number;
  endBit: number;
  /** it served a call (not only a poll or link set-up) */
  served: boolean;
}

export interface EncodedWait {
  station: number;
  /** request line rise, and the first bit of the server's first frame afterwards */
  riseBit: number;
  servedBit: number;
  /** rounds the server passed it by */
  skipped: number;
}

export interface EncodedUnderrun {
  link: string;
  /** seq of the cut frame, and of its fragment */
  seq: number;
  fragmentSeq: number | null;
  station: number;
  atOctet: number;
  end: 'fcs' | 'abort';
  direction: LinkDirection;
  /** the fragment happens to read as an I or UI frame (the call layer will try to read a call in it) */
  fragmentCarriesCall: boolean;
}

export interface EncodedEpisode {
  bitRate: number;
  wiring: 'per-port' | 'multidrop';
  links: EpisodeLink[];
  rts: (HandshakeLine & { station: number })[];
  visits: EncodedVisit[];
  /** first bit of each round's first visit */
  rounds: number[];
  waits: EncodedWait[];
  skipped: { station: number; round: number; atBit: number }[];
  underruns: EncodedUnderrun[];
  /** what pairing must find, as encodeSession reports it */
  exchanges: ExpectedExchange[];
  totalBits: number;
}

const join = (parts: (Uint8Array | number[])[]) => {
  const out = new Uint8Array(parts.reduce((n, p) => n + p.length, 0));
  let at = 0;
  for (const p of parts) {
    out.set(p, at);
    at += p.length;
  }
  return out;
};

const kindOf = (ctrl: number): 'I' | 'S' | 'U' => ((ctrl & 1) === 0 ? 'I' : (ctrl & 3) === 1 ? 'S' : 'U');
/** a frame the call layer reads a call in: I, or UI (ISO/IEC 13239 control octets, from memory) */
const carriesCall = (ctrl: number | undefined) => ctrl !== undefined && ((ctrl & 1) === 0 || (ctrl & 0xef) === 0x03);

/** One data line: frames placed on whole fill flags after the line's last frame. */
class Line {
  readonly frames: EpisodeFrame[] = [];
  /** the bit after the last frame's closing flag (or its abort) */
  cursor = 0;
  private endsInFlag = false;

  constructor(
    readonly name: string,
    readonly direction: LinkDirection,
    readonly station: number | null,
  ) {}

  /** where a frame asked for at `at` starts: there, or on whole flags as soon after as the line allows */
  startFor(at: number): number {
    const want = Math.max(0, Math.round(at));
    return this.frames.length === 0 ? Math.max(8, want) : this.cursor + 8 * Math.max(0, Math.ceil((want - 8 - this.cursor) / 8)) + 8;
  }

  /** a frame starting at startFor(at) */
  send(at: number, bytes: Uint8Array, role: EpisodeRole, station: number, cut?: Underrun): { frame: EpisodeFrame; fragment: EpisodeFrame | null } {
    const start = this.startFor(at);
    let sent = bytes;
    let faults: FrameFaults | undefined;
    if (cut) {
      if (cut.atOctet < 1 || cut.atOctet >= bytes.length) throw new RangeError(`an under-run at octet ${cut.atOctet} is outside the frame's ${bytes.length} octets`);
      if (cut.end === 'fcs') sent = bytes.subarray(0, cut.atOctet);
      else faults = { abortAfterBits: cut.atOctet * 8, abortOnes: cut.abortOnes };
    }
    const frame = this.place(start, sent, role, station, faults, cut?.end === 'abort' ? 'abort' : 'ok');
    let fragment: EpisodeFrame | null = null;
    if (cut && cut.fragment !== false) {
      const rest = bytes.subarray(cut.atOctet);
      // the controller starts a new frame with what the CPU hands it next: the rest, with its own FCS
      fragment = this.place(this.endsInFlag ? this.cursor : this.cursor + 8, rest, 'fragment', station, undefined, 'ok', true);
    }
    return { frame, fragment };
  }

  private place(start: number, bytes: Uint8Array, role: EpisodeRole, station: number, faults: FrameFaults | undefined, status: 'ok' | 'abort', follows = false): EpisodeFrame {
    const span = frameLineSpan(bytes, faults);
    const len = span.length;
    const frame: EpisodeFrame = {
      seq: this.frames.length,
      startBit: start,
      endBit: start + len,
      lastBit: start + span.last,
      bytes,
      damaged: false,
      kind: bytes.length > 1 ? kindOf(bytes[1]) : 'U',
      info: bytes.length > 2 && (bytes[1] & 1) === 0 ? bytes.subarray(2) : null,
      status,
      role,
      station,
      faults,
      follows,
    };
    this.frames.push(frame);
    const abort = faults?.abortAfterBits !== undefined;
    this.cursor = frame.endBit + (abort ? (faults?.abortOnes ?? 7) : 8);
    this.endsInFlag = !abort;
    return frame;
  }

  /** the line bits, with fill flags up to `totalBits` */
  bits(totalBits: number): Uint8Array {
    const items: LineItem[] = [];
    let at = 0;
    for (const f of this.frames) {
      if (f.follows) {
        items.push({ kind: 'frame', bytes: f.bytes, faults: f.faults, sharedFlag: true });
      } else {
        const open = f.startBit - 8;
        if (at === 0 && items.length === 0) {
          if (open > 0) items.push({ kind: 'raw', bits: new Uint8Array(open).fill(1) });
        } else if (open > at) items.push({ kind: 'flags', count: (open - at) / 8 });
        items.push({ kind: 'frame', bytes: f.bytes, faults: f.faults });
      }
      const abort = f.faults?.abortAfterBits !== undefined;
      at = f.endBit + (abort ? (f.faults?.abortOnes ?? 7) : 8);
    }
    items.push({ kind: 'flags', count: Math.max(2, Math.ceil((totalBits - at) / 8)) });
    const enc = encodeLineBits(items);
    enc.frames.forEach((f, i) => {
      if (f.startBit !== this.frames[i].startBit || f.endBit !== this.frames[i].endBit) {
        throw new Error(`${this.name}: frame ${i} placed at ${f.startBit}..${f.endBit}, planned ${this.frames[i].startBit}..${this.frames[i].endBit}`);
      }
    });
    return enc.bits;
  }
}

interface StationState {
  st: EpisodeStation;
  up: Line;
  down: Line;
  rts: HandshakeLine & { station: number };
  next: number;
  /** bit at which the station wants service (its request line rose), or Infinity */
  rise: number;
  sends: number;
  stVs: number;
  stVr: number;
  srvVs: number;
  srvVr: number;
  setUp: boolean;
  skipLeft: number;
  skipArmed: boolean;
  requestCut: boolean;
  answerCut: boolean;
  lost: number;
  erred: boolean;
  /** the expected exchange of the current call */
  ex: ExpectedExchange | null;
  answerBits: number;
}

/** Plans the episode: every frame placed, nothing encoded yet (cheap even for a million frames). */
export function planEpisode(script: EpisodeScript): Omit<EncodedEpisode, 'links'> & { lines: Line[] } {
  const rate = script.bitRate;
  const bits = (s: number) => Math.round(s * rate);
  const turn = script.turnBits ?? 40;
  const step = Math.max(1, bits(script.stepTime ?? 0.00002));
  const retryAfter = bits(script.retryAfter ?? 0.003);
  const pollIdle = script.pollIdle ?? true;
  const multidrop = script.wiring === 'multidrop';
  const sharedUp = multidrop ? new Line('txd', 'to-server', null) : null;
  const sharedDown = multidrop ? new Line('rxd', 'from-server', null) : null;
  const lines: Line[] = multidrop ? [sharedUp!, sharedDown!] : [];
  const states: StationState[] = script.stations.map((st) => {
    const up = sharedUp ?? new Line(`${st.port}_txd`, 'to-server', st.address);
    const down = sharedDown ?? new Line(`${st.port}_rxd`, 'from-server', st.address);
    if (!multidrop) lines.push(up, down);
    return {
      st,
      up,
      down,
      rts: { name: `${st.port}_rts`, initial: 0, edges: [], station: st.address },
      next: 0,
      rise: Infinity,
      sends: 0,
      stVs: 0,
      stVr: 0,
      srvVs: 0,
      srvVr: 0,
      setUp: false,
      skipLeft: 0,
      skipArmed: false,
      requestCut: false,
      answerCut: false,
      lost: 0,
      erred: false,
      ex: null,
      answerBits: bits(st.answerDelay ?? 0),
    };
  });
  const skips = new Map((script.skips ?? []).map((s) => [s.station, s]));
  const visits: EncodedVisit[] = [];
  const rounds: number[] = [];
  const waits: EncodedWait[] = [];
  const skipped: EncodedEpisode['skipped'] = [];
  const underruns: EncodedUnderrun[] = [];
  const exchanges: ExpectedExchange[] = [];
  // a frame may start no sooner than the other lines of the port (and the shared lines) allow
  let t = bits(script.start ?? 0.0002);
  let lastVisitEnd = -1;
  const busy = (s: StationState) => s.next < s.st.calls.length;
  const waitOpen = new Map<StationState, EncodedWait>();

  const raise = (s: StationState, at: number) => {
    s.rise = at;
    if (s.st.requestLine !== false) s.rts.edges.push({ bit: at, level: 1 });
    const w: EncodedWait = { station: s.st.address, riseBit: at, servedBit: -1, skipped: 0 };
    waitOpen.set(s, w);
    waits.push(w);
    const rule = skips.get(s.st.address);
    if (rule && !s.skipArmed && at >= bits(rule.after ?? 0)) {
      s.skipArmed = true;
      s.skipLeft = rule.rounds;
    }
  };
  const drop = (s: StationState, at: number) => {
    if (s.st.requestLine !== false) s.rts.edges.push({ bit: at, level: 0 });
  };
  const noteCut = (s: StationState, line: Line, cut: Underrun, r: { frame: EpisodeFrame; fragment: EpisodeFrame | null }) => {
    if (cut.atOctet < 4) throw new RangeError(`an under-run at octet ${cut.atOctet} leaves no call code and tag to pair by; cut at octet 4 or later`);
    underruns.push({
      link: line.name,
      seq: r.frame.seq,
      fragmentSeq: r.fragment ? r.fragment.seq : null,
      station: s.st.address,
      atOctet: cut.atOctet,
      end: cut.end,
      direction: line.direction,
      fragmentCarriesCall: r.fragment !== null && carriesCall(r.fragment.bytes[1]) && r.fragment.bytes.length > 2,
    });
  };

  /** one visit to a station; returns the bit after its last frame */
  const visit = (s: StationState, round: number): number => {
    const a = s.st.address;
    const frame = (b: number[] | Uint8Array, info?: Uint8Array) => join([b, ...(info ? [info] : [])]);
    const answerAt = (after: number) => after + turn + s.answerBits;
    if (!s.setUp) {
      s.setUp = true;
      const snrm = s.down.send(t, frame([a, control.snrm(true)]), 'setup', a).frame;
      const ua = s.up.send(answerAt(snrm.endBit), frame([a, control.ua(true)]), 'setup', a).frame;
      visits.push({ station: a, round, startBit: snrm.startBit, endBit: ua.endBit, served: false });
      // a station asks only once its link is up
      const call = s.st.calls[0];
      if (call) raise(s, Math.max(bits(call.at), ua.endBit + 8));
      return ua.endBit;
    }
    // a station whose request line is up when the poll goes out answers it with its request
    const waiting = busy(s) && s.rise <= s.down.startFor(t);
    const poll = s.down.send(t, frame([a, control.rr(s.srvVr, true)]), 'poll', a).frame;
    if (!waiting) {
      const rr = s.up.send(answerAt(poll.endBit), frame([a, control.rr(s.stVr, true)]), 'idle', a).frame;
      visits.push({ station: a, round, startBit: poll.startBit, endBit: rr.endBit, served: false });
      return rr.endBit;
    }
    const w = waitOpen.get(s);
    if (w) w.servedBit = poll.startBit;
    waitOpen.delete(s);
    const call = s.st.calls[s.next];
    if (!s.ex) {
      s.ex = {
        station: a,
        link: s.up.name,
        callCode: call.request[0],
        tag: call.request[1],
        requestSeq: -1,
        goodSends: 0,
        responseSeq: null,
        outcome: 'unanswered',
        delaySeconds: null,
        serviceDelaySeconds: s.st.requestLine !== false ? (poll.startBit - s.rise + 0.5) / rate : null,
        firstBit: poll.startBit,
        lastBit: poll.endBit,
      };
      exchanges.push(s.ex);
    }
    const ex = s.ex;
    const cut = !s.requestCut && call.underrun ? call.underrun : undefined;
    const sent = s.up.send(answerAt(poll.endBit), frame([a, control.i(s.stVs, s.stVr, true)], call.request), 'request', a, cut);
    const req = sent.frame;
    s.sends++;
    drop(s, (sent.fragment ?? req).endBit + 8);
    let end = (sent.fragment ?? req).endBit;
    if (cut) {
      s.requestCut = true;
      noteCut(s, s.up, cut, sent);
      // readable up to its tag when it closed with an FCS: the pairing counts it as a send of the call
      if (cut.end === 'fcs') {
        if (ex.requestSeq < 0) ex.requestSeq = req.seq;
        ex.goodSends++;
      }
      if (sent.fragment && s.up.direction === 'to-server' && carriesCall(sent.fragment.bytes[1]) && sent.fragment.bytes.length > 2) {
        const ghost = sent.fragment.bytes;
        exchanges.push({
          station: multidrop ? ghost[0] : a,
          link: s.up.name,
          callCode: ghost[2],
          tag: ghost[3] ?? -1,
          requestSeq: sent.fragment.seq,
          goodSends: 1,
          responseSeq: null,
          outcome: 'unanswered',
          delaySeconds: null,
          serviceDelaySeconds: null,
          firstBit: sent.fragment.startBit,
          lastBit: sent.fragment.endBit,
        });
      }
      // the server cannot read it and moves on; the station asks again when its wait runs out
      raise(s, end + retryAfter);
      visits.push({ station: a, round, startBit: poll.startBit, endBit: end, served: true });
      return end;
    }
    if (ex.requestSeq < 0) ex.requestSeq = req.seq;
    ex.goodSends++;
    if (call.overrun?.lost && s.lost < call.overrun.lost) {
      // intact on the line, lost in the server's receiver: no answer, not even at the link level
      s.lost++;
      raise(s, end + retryAfter);
      visits.push({ station: a, round, startBit: poll.startBit, endBit: end, served: true });
      return end;
    }
    s.stVs = (s.stVs + 1) & 7;
    s.srvVr = (s.srvVr + 1) & 7;
    if (!call.response) {
      const ack = s.down.send(req.endBit + turn, frame([a, control.rr(s.srvVr, false)]), 'ack', a).frame;
      end = ack.endBit;
      if (s.sends >= (call.sends ?? 2)) finishCall(s, end);
      else raise(s, end + retryAfter);
      visits.push({ station: a, round, startBit: poll.startBit, endBit: end, served: true });
      return end;
    }
    const rcut = !s.answerCut && call.responseUnderrun ? call.responseUnderrun : undefined;
    const erring = call.overrun?.errorStatus !== undefined && !s.erred;
    let info = call.response;
    if (erring) {
      // the server read a garbled request and says so
      info = call.response.slice();
      info[2] = call.overrun!.errorStatus!;
      s.erred = true;
    }
    const answered = s.down.send(req.endBit - 1 + bits(call.serverDelay), frame([a, control.i(s.srvVs, s.srvVr, true)], info), 'response', a, rcut);
    const resp = answered.frame;
    s.srvVs = (s.srvVs + 1) & 7;
    end = (answered.fragment ?? resp).endBit;
    if (rcut) {
      s.answerCut = true;
      noteCut(s, s.down, rcut, answered);
      if (rcut.end === 'fcs') {
        // the pairing reads the cut answer as the answer: this exchange is over, the repeat is a new one
        ex.responseSeq = resp.seq;
        ex.delaySeconds = (resp.startBit - (req.endBit - 1)) / rate;
        ex.outcome = ex.goodSends > 1 ? 'retried' : 'answered';
        ex.lastBit = end;
        s.ex = null;
      }
      // the station cannot read it and asks again
      raise(s, end + retryAfter);
      visits.push({ station: a, round, startBit: poll.startBit, endBit: end, served: true });
      return end;
    }
    s.stVr = (s.stVr + 1) & 7;
    ex.responseSeq = resp.seq;
    ex.delaySeconds = (resp.startBit - (req.endBit - 1)) / rate;
    const ack = s.up.send(answerAt(resp.endBit), frame([a, control.rr(s.stVr, true)]), 'ack', a).frame;
    end = ack.endBit;
    if (erring) {
      // an answered exchange; the station sends the same request again at once (same tag)
      ex.outcome = ex.goodSends > 1 ? 'retried' : 'answered';
      ex.lastBit = end;
      s.ex = null;
      raise(s, end + 8);
      visits.push({ station: a, round, startBit: poll.startBit, endBit: end, served: true });
      return end;
    }
    finishCall(s, end);
    visits.push({ station: a, round, startBit: poll.startBit, endBit: end, served: true });
    return end;
  };

  const finishCall = (s: StationState, end: number) => {
    const ex = s.ex;
    if (ex) {
      ex.outcome = ex.responseSeq === null ? 'unanswered' : ex.goodSends > 1 ? 'retried' : 'answered';
      ex.lastBit = end;
    }
    s.ex = null;
    s.next++;
    s.sends = 0;
    s.requestCut = false;
    s.answerCut = false;
    s.lost = 0;
    s.erred = false;
    const call = s.st.calls[s.next];
    if (call) raise(s, Math.max(end + 8, bits(call.at)));
    else s.rise = Infinity;
  };

  const maxRounds = script.maxRounds ?? 1_000_000;
  let tail = script.tailRounds ?? 2;
  for (let round = 0; round < maxRounds; round++) {
    let first = true;
    for (const s of states) {
      const waiting = busy(s) && s.rise <= t;
      if (s.setUp && waiting && s.skipLeft > 0 && s.rise < lastVisitEnd) {
        // the slow server passes it by
        s.skipLeft--;
        const w = waitOpen.get(s);
        if (w) w.skipped++;
        skipped.push({ station: s.st.address, round, atBit: lastVisitEnd });
        t += step;
        continue;
      }
      if (!s.setUp || waiting || pollIdle) {
        // the server's next frame may not start before the lines it uses are free
        t = Math.max(t, s.down.cursor, s.up.cursor);
        const startIndex = visits.length;
        lastVisitEnd = visit(s, round);
        if (first) rounds.push(visits[startIndex].startBit);
        first = false;
        t = lastVisitEnd + step;
      } else t += step;
    }
    if (states.every((s) => !busy(s))) {
      if (!pollIdle || --tail < 0) break;
    } else if (!pollIdle && states.every((s) => s.setUp) && states.every((s) => !busy(s) || s.rise > t)) {
      // nobody waiting and nothing polled: jump to the next request, keeping the server's place in its round
      const next = Math.min(...states.filter(busy).map((s) => s.rise));
      const k = Math.ceil((next - t) / (step * states.length));
      if (k > 0) t += k * step * states.length;
    }
  }
  const totalBits = Math.max(...lines.map((l) => l.cursor)) + 64;
  return { bitRate: rate, wiring: script.wiring, lines, rts: states.map((s) => s.rts).filter((_, i) => script.stations[i].requestLine !== false), visits, rounds, waits, skipped, underruns, exchanges, totalBits };
}

/** Plans and encodes an episode: line bits per link, ready for renderWaveform. */
export function encodeEpisode(script: EpisodeScript): EncodedEpisode {
  const plan = planEpisode(script);
  const links: EpisodeLink[] = plan.lines.map((l) => ({ name: l.name, direction: l.direction, station: l.station, frames: l.frames, bits: l.bits(plan.totalBits) }));
  const { lines: _lines, ...rest } = plan;
  return { ...rest, links };
}

/** Frames of an episode as a frame log (FCS appended; an aborted frame's whole octets without one). */
export function episodeFrameLog(e: EncodedEpisode, leadBits = 2): LoggedFrame[] {
  const out: LoggedFrame[] = [];
  for (const l of e.links) {
    for (const f of l.frames) {
      let bytes: Uint8Array;
      if (f.status === 'abort') bytes = f.bytes.subarray(0, Math.floor((f.faults?.abortAfterBits ?? 0) / 8));
      else {
        const fcs = fcs16(f.bytes);
        bytes = join([f.bytes, [fcs & 0xff, fcs >> 8]]);
      }
      out.push({ seconds: (f.startBit + leadBits) / e.bitRate, bytes, link: l.name });
    }
  }
  return out.sort((a, b) => a.seconds - b.seconds);
}
