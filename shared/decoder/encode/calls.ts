// The reverse path of the call layer, for tests and the demo samples: CP/M call envelope
// information fields, and a session script encoder that turns a scenario (stations, calls,
// server delays, damaged frames, unanswered calls) into frames on two links per station port
// with the SDLC link layer around them, then line bits for the existing waveform encoders.
//
// Link layer as the script sends it (SDLC normal response mode, modulo 8; the server is the
// primary, each station a secondary, and the address octet is the station's in both
// directions — IBM SDLC concepts, from memory):
//   server SNRM(P) → station UA(F)                               once per port
//   per call: server RR(P) poll → station I(request, F) → server I(response, P) → station RR(F)
// A damaged request (bad FCS) is ignored by the server, which polls again after `retryAfter`;
// the station sends the same I frame again (same N(S)). A damaged response leaves the
// station waiting; the server polls again after `retryAfter`, the station repeats the call
// (same call and tag, next N(S)) and the server answers again with the same N(S).
import { FCB as FCB_OFFSET, CPM_RECORD_BYTES, RESPONSE_FLAG } from '../calls/cpm-envelope';
import type { LinkDirection } from '../calls/exchanges';
import { encodeLineBits, type FrameFaults, type LineItem } from './line-bits';
import type { HandshakeLine } from './waveform';
import type { LoggedFrame } from './writers/framelog';

// ---------------------------------------------------------------- envelope builders

export interface NameAttributes {
  f1?: boolean;
  f2?: boolean;
  f3?: boolean;
  f4?: boolean;
  readOnly?: boolean;
  system?: boolean;
  archive?: boolean;
}

/** "HYMNS.TXT" → 8 + 3 upper-case, space-padded characters with attribute bits in the high bits. */
export function cpmName(name: string, attrs: NameAttributes = {}): Uint8Array {
  const [base, type = ''] = name.toUpperCase().split('.');
  if (base.length > 8 || type.length > 3) throw new RangeError(`"${name}" is not an 8.3 CP/M name`);
  const out = new Uint8Array(11).fill(0x20);
  for (let i = 0; i < base.length; i++) out[i] = base.charCodeAt(i) & 0x7f;
  for (let i = 0; i < type.length; i++) out[8 + i] = type.charCodeAt(i) & 0x7f;
  const hi = [attrs.f1, attrs.f2, attrs.f3, attrs.f4];
  hi.forEach((on, i) => on && (out[i] |= 0x80));
  if (attrs.readOnly) out[8] |= 0x80;
  if (attrs.system) out[9] |= 0x80;
  if (attrs.archive) out[10] |= 0x80;
  return out;
}

export interface FcbSpec {
  /** 0 = default drive, 1 = A … */
  drive?: number;
  name: string;
  attributes?: NameAttributes;
  ex?: number;
  s2?: number;
  rc?: number;
  cr?: number;
  /** r0–r2 */
  random?: number;
  /** rename: the new name, written at FCB 16–31 */
  newName?: string;
}

/** A 36-byte FCB (CP/M 2.2 Operating System Manual 5.2, Figure 5-2 offsets). */
export function fcb(spec: FcbSpec): Uint8Array {
  const out = new Uint8Array(36);
  out[FCB_OFFSET.dr] = spec.drive ?? 0;
  out.set(cpmName(spec.name, spec.attributes), FCB_OFFSET.f1);
  out[FCB_OFFSET.ex] = spec.ex ?? 0;
  out[FCB_OFFSET.s2] = spec.s2 ?? 0;
  out[FCB_OFFSET.rc] = spec.rc ?? 0;
  if (spec.newName) out.set(cpmName(spec.newName), FCB_OFFSET.d0 + 1);
  out[FCB_OFFSET.cr] = spec.cr ?? 0;
  const r = spec.random ?? 0;
  out[FCB_OFFSET.r0] = r & 0xff;
  out[FCB_OFFSET.r1] = (r >> 8) & 0xff;
  out[FCB_OFFSET.r2] = (r >> 16) & 0xff;
  return out;
}

/** Sets ex, s2 and cr of an FCB spec for a sequential record number (record = (s2*32 + ex)*128 + cr). */
export function sequentialPosition(record: number): { ex: number; s2: number; cr: number } {
  return { cr: record % 128, ex: Math.floor(record / 128) % 32, s2: Math.floor(record / (128 * 32)) };
}

export interface EnvelopeParts {
  fcb?: FcbSpec | Uint8Array;
  /** 128-byte record (writes in requests, reads in responses) */
  record?: Uint8Array;
  /** console/list/print text */
  text?: string;
  /** other octets after the header (select disk, set DMA, boot load fields) */
  extra?: Uint8Array;
}

function join(parts: (Uint8Array | number[])[]): Uint8Array {
  const total = parts.reduce((n, p) => n + p.length, 0);
  const out = new Uint8Array(total);
  let at = 0;
  for (const p of parts) {
    out.set(p, at);
    at += p.length;
  }
  return out;
}

function body(p: EnvelopeParts): Uint8Array[] {
  const parts: Uint8Array[] = [];
  if (p.fcb) parts.push(p.fcb instanceof Uint8Array ? p.fcb : fcb(p.fcb));
  if (p.extra) parts.push(p.extra);
  if (p.text !== undefined) parts.push(new Uint8Array(Array.from(p.text, (c) => c.charCodeAt(0) & 0x7f)));
  if (p.record) {
    if (p.record.length !== CPM_RECORD_BYTES) throw new RangeError(`a record is ${CPM_RECORD_BYTES} bytes, got ${p.record.length}`);
    parts.push(p.record);
  }
  return parts;
}

export function requestInfo(call: number, tag: number, user: number, parts: EnvelopeParts = {}): Uint8Array {
  return join([[call, tag, user], ...body(parts)]);
}

export function responseInfo(call: number, tag: number, status: number, parts: EnvelopeParts = {}): Uint8Array {
  return join([[call | RESPONSE_FLAG, tag, status], ...body(parts)]);
}

/** Boot load request extra: image name (8 + 3) and record number u16le. */
export function bootRequestExtra(image: string, record: number): Uint8Array {
  return join([cpmName(image), [record & 0xff, record >> 8]]);
}

export function bootResponseExtra(record: number): Uint8Array {
  return new Uint8Array([record & 0xff, record >> 8]);
}

/** One 32-byte directory entry: user, name 8 + 3, ex, s1, s2, rc, d0–d15 (CP/M 2.2, from memory). */
export function directoryEntry(user: number, name: string, opts: { attributes?: NameAttributes; ex?: number; rc?: number; blocks?: number[] } = {}): Uint8Array {
  const e = new Uint8Array(32);
  e[0] = user;
  e.set(cpmName(name, opts.attributes), 1);
  e[12] = opts.ex ?? 0;
  e[15] = opts.rc ?? 0;
  (opts.blocks ?? []).slice(0, 16).forEach((b, i) => (e[16 + i] = b));
  return e;
}

/** A 128-byte directory record of four entries; unused entries hold 0xE5 (empty, from memory). */
export function directoryRecord(entries: Uint8Array[]): Uint8Array {
  const r = new Uint8Array(CPM_RECORD_BYTES).fill(0xe5);
  entries.slice(0, 4).forEach((e, i) => r.set(e, i * 32));
  return r;
}

/** Splits file contents into 128-byte records, the last padded with ^Z (0x1A, CP/M text end, from memory). */
export function toRecords(data: Uint8Array, pad = 0x1a): Uint8Array[] {
  const out: Uint8Array[] = [];
  for (let at = 0; at < Math.max(1, data.length); at += CPM_RECORD_BYTES) {
    const r = new Uint8Array(CPM_RECORD_BYTES).fill(pad);
    r.set(data.subarray(at, at + CPM_RECORD_BYTES));
    out.push(r);
  }
  return out;
}

// ---------------------------------------------------------------- session script

export interface ScriptCall {
  /** information field of the request */
  request: Uint8Array;
  /** information field of the response; null: the server never answers this call */
  response: Uint8Array | null;
  /** seconds from the last bit of the answered send to the first bit of the response */
  serverDelay: number;
  /** the first n sends of the request arrive damaged (bad FCS) and are sent again */
  damagedRequests?: number;
  /** the server's first n answers arrive damaged; the station repeats the call */
  damagedResponses?: number;
  /** unanswered calls: sends in all before the station gives up (default 3) */
  sends?: number;
  /** seconds the station waits after the previous call before asking */
  thinkTime?: number;
}

export interface StationScript {
  address: number;
  /**
   * link-name prefix of the station's port, e.g. "p1" → p1_txd (to server), p1_rxd (from server),
   * p1_rts. Stations that name the same port share its data lines (a multidrop line); their
   * calls must not overlap in time (the script does not arbitrate the line).
   */
  port: string;
  /** name of the station's RTS line (default `${port}_rts`; stations on a shared port each need their own) */
  rtsName?: string;
  /** seconds from the capture start to the server's SNRM on this port */
  start: number;
  /** raise RTS before each request and drop it after */
  rts?: boolean;
  calls: ScriptCall[];
}

export interface SessionScript {
  bitRate: number;
  stations: StationScript[];
  /** seconds the server takes to poll a port after its RTS rises (round robin cost; default 0.0005) */
  pollDelay?: number;
  /** seconds before the server polls again after a damaged or missing frame (default 0.004) */
  retryAfter?: number;
  /** bits a side takes to turn around before it answers (default 40) */
  turnBits?: number;
}

export interface ScriptFrame {
  /** order on the link: the decoder's seq */
  seq: number;
  startBit: number;
  endBit: number;
  /** the last data bit (endBit - 1, or endBit - 2 after a trailing stuffed 0): where a receiver's frame ends */
  lastBit: number;
  /** address, control, information (no FCS) */
  bytes: Uint8Array;
  damaged: boolean;
  kind: 'I' | 'S' | 'U';
  info: Uint8Array | null;
}

export interface SessionLink {
  name: string;
  direction: LinkDirection;
  /** the station on this port; null when several stations share it (multidrop) */
  station: number | null;
  bits: Uint8Array;
  frames: ScriptFrame[];
}

export interface ExpectedExchange {
  station: number;
  /** the to-server link the request went out on */
  link: string;
  callCode: number;
  tag: number;
  /** seq of the first readable send on the to-server link */
  requestSeq: number;
  /** good (readable) sends of the request */
  goodSends: number;
  /** seq of the first readable response on the from-server link, null when unanswered */
  responseSeq: number | null;
  outcome: 'answered' | 'retried' | 'unanswered';
  /** encoded server delay of the readable answer (seconds) */
  delaySeconds: number | null;
  /** RTS rise to the poll's first bit, when the port has RTS */
  serviceDelaySeconds: number | null;
  /** line-bit span of the exchange on its port: the poll's first bit to the last frame's last bit */
  firstBit: number;
  lastBit: number;
}

export interface EncodedSession {
  bitRate: number;
  links: SessionLink[];
  rts: (HandshakeLine & { station: number })[];
  exchanges: ExpectedExchange[];
  /** bits of the longest link */
  totalBits: number;
}

/** Link-level control octets (modulo 8; ISO/IEC 13239 bit layout, from memory). */
export const control = {
  i: (ns: number, nr: number, pf: boolean) => ((nr & 7) << 5) | (pf ? 0x10 : 0) | ((ns & 7) << 1),
  rr: (nr: number, pf: boolean) => ((nr & 7) << 5) | (pf ? 0x10 : 0) | 0x01,
  snrm: (p: boolean) => 0x83 | (p ? 0x10 : 0),
  ua: (f: boolean) => 0x63 | (f ? 0x10 : 0),
};

/** line bits a frame body takes after zero-bit insertion (flags not counted), and its last data bit */
function bodyBits(bytes: Uint8Array, faults: FrameFaults | undefined): { length: number; last: number } {
  const f = encodeLineBits([{ kind: 'frame', bytes, faults }]).frames[0];
  return { length: f.endBit - f.startBit, last: f.lastBit - f.startBit };
}

/** One link being written: frames placed at chosen bit positions with fill flags between. */
class LinkWriter {
  readonly items: LineItem[] = [];
  readonly frames: ScriptFrame[] = [];
  cursor = 0;

  constructor(
    readonly name: string,
    readonly direction: LinkDirection,
    public station: number | null,
  ) {}

  /**
   * Sends a frame whose first bit (after the opening flag) is at `startBit` or, if the line is
   * still busy, as soon after as it can. Returns the frame.
   */
  send(startBit: number, bytes: Uint8Array, damaged: boolean): ScriptFrame {
    let open = Math.max(Math.round(startBit) - 8, this.cursor);
    if (this.cursor === 0) {
      // before the first flag the line idles at 1
      if (open > 0) this.items.push({ kind: 'raw', bits: new Array(open).fill(1) });
    } else {
      // fill with flags only (anything between two flags would read as a short frame): 8-bit
      // flags and flags sharing their 0 with the one before (7 bits); a gap no mix of 7s and
      // 8s makes (1–6, 9–13, …) waits a few bits longer
      let gap = open - this.cursor;
      let shared = (8 - (gap % 8)) % 8;
      while (gap < 7 * shared) {
        gap++;
        open++;
        shared = (8 - (gap % 8)) % 8;
      }
      const whole = (gap - 7 * shared) / 8;
      if (shared) this.items.push({ kind: 'flags', count: shared, sharedZero: true });
      if (whole) this.items.push({ kind: 'flags', count: whole });
    }
    // a flipped bit in the middle of the information (or control) field makes the FCS bad
    const faults: FrameFaults | undefined = damaged ? { flipBits: damageBit(bytes) } : undefined;
    this.items.push({ kind: 'frame', bytes, faults });
    const body = bodyBits(bytes, faults);
    const frame: ScriptFrame = {
      seq: this.frames.length,
      startBit: open + 8,
      endBit: open + 8 + body.length,
      lastBit: open + 8 + body.last,
      bytes,
      damaged,
      kind: (bytes[1] & 1) === 0 ? 'I' : (bytes[1] & 3) === 1 ? 'S' : 'U',
      info: (bytes[1] & 1) === 0 ? bytes.subarray(2) : null,
    };
    this.frames.push(frame);
    this.cursor = frame.endBit + 8;
    return frame;
  }

  finish(totalBits: number): Uint8Array {
    const tail = Math.max(16, totalBits - this.cursor);
    this.items.push({ kind: 'flags', count: Math.ceil(tail / 8) });
    const enc = encodeLineBits(this.items);
    // the encoder must have put every frame where this writer computed it
    enc.frames.forEach((f, i) => {
      if (f.startBit !== this.frames[i].startBit || f.endBit !== this.frames[i].endBit) {
        throw new Error(`${this.name}: frame ${i} placed at ${f.startBit}..${f.endBit}, expected ${this.frames[i].startBit}..${this.frames[i].endBit}`);
      }
    });
    return enc.bits;
  }
}

const frameBytes = (address: number, ctrl: number, info?: Uint8Array) => join([[address, ctrl], ...(info ? [info] : [])]);

/** Encodes a session script into line bits per link, with what a decoder should find. */
export function encodeSession(script: SessionScript): EncodedSession {
  const rate = script.bitRate;
  const bits = (s: number) => Math.round(s * rate);
  const turn = script.turnBits ?? 40;
  const pollDelay = bits(script.pollDelay ?? 0.0005);
  const retryAfter = bits(script.retryAfter ?? 0.004);
  const writers: LinkWriter[] = [];
  const rts: EncodedSession['rts'] = [];
  const expected: ExpectedExchange[] = [];

  const ports = new Map<string, { up: LinkWriter; down: LinkWriter }>();
  for (const st of script.stations) {
    let port = ports.get(st.port);
    if (!port) {
      port = { up: new LinkWriter(`${st.port}_txd`, 'to-server', st.address), down: new LinkWriter(`${st.port}_rxd`, 'from-server', st.address) };
      ports.set(st.port, port);
      writers.push(port.up, port.down);
    } else if (port.up.station !== st.address) {
      port.up.station = null;
      port.down.station = null;
    }
    const { up, down } = port;
    const rtsLine: HandshakeLine & { station: number } = { name: st.rtsName ?? `${st.port}_rts`, initial: 0, edges: [], station: st.address };
    if (st.rts) rts.push(rtsLine);
    const a = st.address;
    // link state: send and receive sequence numbers of each side
    let stVs = 0;
    let stVr = 0;
    let srvVs = 0;
    let srvVr = 0;
    let t = bits(st.start);
    const snrm = down.send(t + 8, frameBytes(a, control.snrm(true)), false);
    const ua = up.send(snrm.endBit + turn, frameBytes(a, control.ua(true)), false);
    t = ua.endBit;

    for (const call of st.calls) {
      t += bits(call.thinkTime ?? 0.0003);
      let rise: number | null = null;
      if (st.rts) {
        rise = t;
        rtsLine.edges.push({ bit: rise, level: 1 });
      }
      let poll = down.send(t + (st.rts ? pollDelay : turn), frameBytes(a, control.rr(srvVr, true)), false);
      const serviceDelay = rise !== null ? (poll.startBit - rise + 0.5) / rate : null;
      const ex: ExpectedExchange = {
        station: a,
        link: up.name,
        callCode: call.request[0],
        tag: call.request[1],
        requestSeq: -1,
        goodSends: 0,
        responseSeq: null,
        outcome: 'unanswered',
        delaySeconds: null,
        serviceDelaySeconds: serviceDelay,
        firstBit: poll.startBit,
        lastBit: poll.endBit,
      };
      expected.push(ex);
      let damagedReq = call.damagedRequests ?? 0;
      let damagedResp = call.damagedResponses ?? 0;
      const maxSends = call.response ? Infinity : call.sends ?? 3;
      let sends = 0;
      for (;;) {
        // the station answers the poll with its request
        const damaged = damagedReq > 0;
        const req = up.send(poll.endBit + turn, frameBytes(a, control.i(stVs, stVr, true), call.request), damaged);
        sends++;
        if (damaged) {
          damagedReq--;
          poll = down.send(req.endBit + retryAfter, frameBytes(a, control.rr(srvVr, true)), false);
          continue; // same N(S) again
        }
        if (ex.requestSeq < 0) ex.requestSeq = req.seq;
        ex.goodSends++;
        stVs = (stVs + 1) & 7;
        srvVr = (srvVr + 1) & 7;
        if (rise !== null && ex.goodSends === 1) rtsLine.edges.push({ bit: req.endBit + 8, level: 0 });
        if (!call.response) {
          // acknowledged at the link level, never answered
          const ack = down.send(req.endBit + turn, frameBytes(a, control.rr(srvVr, false)), false);
          if (sends >= maxSends) {
            t = ack.endBit;
            break;
          }
          poll = down.send(ack.endBit + retryAfter, frameBytes(a, control.rr(srvVr, true)), false);
          continue;
        }
        const lost = damagedResp > 0;
        const resp = down.send(req.lastBit + bits(call.serverDelay), frameBytes(a, control.i(srvVs, srvVr, true), call.response), lost);
        if (lost) {
          damagedResp--;
          // the station never saw it: the server polls again and sends the same N(S) later
          poll = down.send(resp.endBit + retryAfter, frameBytes(a, control.rr(srvVr, true)), false);
          continue;
        }
        srvVs = (srvVs + 1) & 7;
        stVr = (stVr + 1) & 7;
        ex.responseSeq = resp.seq;
        ex.delaySeconds = (resp.startBit - req.lastBit) / rate;
        const ack = up.send(resp.endBit + turn, frameBytes(a, control.rr(stVr, true)), false);
        t = ack.endBit;
        break;
      }
      ex.outcome = ex.responseSeq === null ? 'unanswered' : ex.goodSends > 1 ? 'retried' : 'answered';
      ex.lastBit = t;
    }
  }
  const totalBits = writers.reduce((m, w) => Math.max(m, w.cursor), 0) + 64;
  const links: SessionLink[] = writers.map((w) => ({ name: w.name, direction: w.direction, station: w.station, frames: w.frames, bits: w.finish(totalBits) }));
  return { bitRate: rate, links, rts, exchanges: expected, totalBits };
}

/** Frames of the chosen links as a frame log (FCS appended, time = first bit after the opening flag). */
export function sessionFrameLog(session: EncodedSession, links?: string[], leadBits = 2): LoggedFrame[] {
  const out: LoggedFrame[] = [];
  for (const l of session.links) {
    if (links && !links.includes(l.name)) continue;
    const enc = encodeLineBits(l.frames.map((f) => ({ kind: 'frame' as const, bytes: f.bytes, faults: f.damaged ? { flipBits: damageBit(f.bytes) } : undefined })));
    l.frames.forEach((f, i) => out.push({ seconds: (f.startBit + leadBits) / session.bitRate, bytes: enc.frames[i].wire, link: l.name }));
  }
  return out.sort((a, b) => a.seconds - b.seconds);
}

/** the bit a damaged frame has flipped: in the middle of its information (or control) field */
function damageBit(bytes: Uint8Array): number[] {
  return [Math.min(bytes.length * 8 - 1, 8 * Math.max(2, Math.floor(bytes.length / 2)) + 3)];
}

/** NRZI line levels of line bits (a 0 changes the level, a 1 keeps it; starting level 1), as octets LSB first. */
export function nrziOctets(lineBits: Uint8Array): Uint8Array {
  const out = new Uint8Array(Math.ceil(lineBits.length / 8)).fill(0);
  let level = 1;
  for (let i = 0; i < out.length * 8; i++) {
    const b = i < lineBits.length ? lineBits[i] : 1;
    if (b === 0) level ^= 1;
    out[i >> 3] |= level << (i & 7);
  }
  return out;
}

// ---------------------------------------------------------------- call sequences for scripts

/** Hands out tags 1, 2, … 255, 1, … for one station's calls. */
export class Tags {
  private last = 0;
  next(): number {
    this.last = (this.last % 255) + 1;
    return this.last;
  }
}

export interface SequenceOptions {
  tags: Tags;
  user?: number;
  /** server delay of every call in the sequence (seconds) */
  delay: number;
}

function call(request: Uint8Array, response: Uint8Array | null, delay: number): ScriptCall {
  return { request, response, serverDelay: delay };
}

/** The BDOS's own flag in the high bit of s2, set on open and make (from memory of the CP/M 2.2 BDOS listing). */
export const S2_WRITE_FLAG = 0x80;

/**
 * open, read sequential record by record, the end-of-file answer (no record), close. The open
 * answer's rc counts the records of extent 0, 128 when it is full (the BDOS's value on open).
 * `bdosFlag`: the station forwards its FCB as the BDOS left it after open, with s2 bit 7 set.
 */
export function readFileCalls(name: string, data: Uint8Array, o: SequenceOptions & { attributes?: NameAttributes; bdosFlag?: boolean }): ScriptCall[] {
  const user = o.user ?? 0;
  const records = toRecords(data);
  const out: ScriptCall[] = [];
  let tag = o.tags.next();
  const size = Math.min(128, records.length);
  const flag = o.bdosFlag ? S2_WRITE_FLAG : 0;
  const pos = (record: number) => {
    const p = sequentialPosition(record);
    return { ...p, s2: p.s2 | flag };
  };
  out.push(call(requestInfo(15, tag, user, { fcb: { name } }), responseInfo(15, tag, 0, { fcb: { name, attributes: o.attributes, rc: size, s2: flag } }), o.delay));
  for (let i = 0; i <= records.length; i++) {
    tag = o.tags.next();
    const at = pos(i);
    const req = requestInfo(20, tag, user, { fcb: { name, ...at, rc: size } });
    const resp =
      i < records.length
        ? responseInfo(20, tag, 0, { fcb: { name, attributes: o.attributes, ...pos(i + 1), rc: size }, record: records[i] })
        : responseInfo(20, tag, 1, { fcb: { name, attributes: o.attributes, ...at, rc: size } });
    out.push(call(req, resp, o.delay));
  }
  tag = o.tags.next();
  out.push(call(requestInfo(16, tag, user, { fcb: { name, s2: flag } }), responseInfo(16, tag, 0, { fcb: { name, rc: size, s2: flag } }), o.delay));
  return out;
}

/** compute file size: the answer's r0–r2 hold the number of records */
export function computeSizeCalls(name: string, records: number, o: SequenceOptions): ScriptCall[] {
  const tag = o.tags.next();
  return [call(requestInfo(35, tag, o.user ?? 0, { fcb: { name } }), responseInfo(35, tag, 0, { fcb: { name, random: records } }), o.delay)];
}

/** make file, write sequential record by record, close */
export function writeFileCalls(name: string, data: Uint8Array, o: SequenceOptions): ScriptCall[] {
  const user = o.user ?? 0;
  const records = toRecords(data);
  const out: ScriptCall[] = [];
  let tag = o.tags.next();
  out.push(call(requestInfo(22, tag, user, { fcb: { name } }), responseInfo(22, tag, 0, { fcb: { name } }), o.delay));
  records.forEach((r, i) => {
    tag = o.tags.next();
    out.push(call(requestInfo(21, tag, user, { fcb: { name, ...sequentialPosition(i) }, record: r }), responseInfo(21, tag, 0, { fcb: { name, ...sequentialPosition(i + 1) } }), o.delay));
  });
  tag = o.tags.next();
  out.push(call(requestInfo(16, tag, user, { fcb: { name } }), responseInfo(16, tag, 0, { fcb: { name } }), o.delay));
  return out;
}

/** read random of chosen records (status 0), e.g. to fetch a file out of order */
export function readRandomCalls(name: string, data: Uint8Array, order: number[], o: SequenceOptions): ScriptCall[] {
  const user = o.user ?? 0;
  const records = toRecords(data);
  return order.map((n) => {
    const tag = o.tags.next();
    const ok = n < records.length;
    return call(
      requestInfo(33, tag, user, { fcb: { name, random: n } }),
      responseInfo(33, tag, ok ? 0 : 1, { fcb: { name, random: n }, record: ok ? records[n] : undefined }),
      o.delay,
    );
  });
}

/**
 * open, lock record, read random, write random (the new contents), unlock, close. The open answer
 * says the file has `fileRecords` records (default: up to the record updated).
 */
export function updateRecordCalls(
  name: string,
  record: number,
  before: Uint8Array,
  after: Uint8Array,
  o: SequenceOptions & { lockStatus?: number; fileRecords?: number },
): ScriptCall[] {
  const user = o.user ?? 0;
  const f = { name, random: record };
  const t = () => o.tags.next();
  let tag = t();
  // extent 0 is opened: its rc counts the file's records, 128 when that extent is full
  const rc = Math.min(128, o.fileRecords ?? record + 1);
  const out: ScriptCall[] = [call(requestInfo(15, tag, user, { fcb: { name } }), responseInfo(15, tag, 0, { fcb: { name, rc } }), o.delay)];
  tag = t();
  out.push(call(requestInfo(42, tag, user, { fcb: f }), responseInfo(42, tag, o.lockStatus ?? 0, { fcb: f }), o.delay));
  tag = t();
  out.push(call(requestInfo(33, tag, user, { fcb: f }), responseInfo(33, tag, 0, { fcb: f, record: before }), o.delay));
  tag = t();
  out.push(call(requestInfo(34, tag, user, { fcb: f, record: after }), responseInfo(34, tag, 0, { fcb: f }), o.delay));
  tag = t();
  out.push(call(requestInfo(43, tag, user, { fcb: f }), responseInfo(43, tag, 0, { fcb: f }), o.delay));
  tag = t();
  out.push(call(requestInfo(16, tag, user, { fcb: { name } }), responseInfo(16, tag, 0, { fcb: { name } }), o.delay));
  return out;
}

/** boot load of every record of an image, then the "past the end" answer */
export function bootCalls(image: string, data: Uint8Array, o: SequenceOptions): ScriptCall[] {
  const records = toRecords(data, 0);
  const out: ScriptCall[] = [];
  for (let i = 0; i <= records.length; i++) {
    const tag = o.tags.next();
    const ok = i < records.length;
    out.push(
      call(
        requestInfo(0x70, tag, 0, { extra: bootRequestExtra(image, i) }),
        responseInfo(0x70, tag, ok ? 0 : 1, { extra: bootResponseExtra(i), record: ok ? records[i] : undefined }),
        o.delay,
      ),
    );
  }
  return out;
}

export interface ListedFile {
  name: string;
  attributes?: NameAttributes;
  /** records in the (last) extent */
  rc: number;
}

/** search first with a pattern, then search next until the "no more files" answer */
export function directoryCalls(pattern: string, files: ListedFile[], o: SequenceOptions): ScriptCall[] {
  const user = o.user ?? 0;
  const out: ScriptCall[] = [];
  for (let i = 0; i <= files.length; i++) {
    const tag = o.tags.next();
    const code = i === 0 ? 17 : 18;
    const slot = i % 4;
    const found = i < files.length;
    const entries: Uint8Array[] = [];
    for (let k = i - slot; k < Math.min(files.length, i - slot + 4); k++) entries.push(directoryEntry(user, files[k].name, { attributes: files[k].attributes, rc: files[k].rc }));
    // a "no (more) matching files" answer carries no directory record
    const record = found ? directoryRecord(entries) : undefined;
    const req = requestInfo(code, tag, user, code === 17 ? { fcb: { name: pattern } } : {});
    const resp = responseInfo(code, tag, found ? slot : 0xff, code === 17 ? { fcb: { name: pattern }, record } : { record });
    out.push(call(req, resp, o.delay));
  }
  return out;
}

/** list output (printer) or console output of text in pieces of `chunk` characters */
export function textOutputCalls(code: 2 | 5, text: string, o: SequenceOptions & { chunk?: number }): ScriptCall[] {
  const out: ScriptCall[] = [];
  const size = o.chunk ?? 64;
  for (let at = 0; at < text.length; at += size) {
    const tag = o.tags.next();
    out.push(call(requestInfo(code, tag, o.user ?? 0, { text: text.slice(at, at + size) }), responseInfo(code, tag, 0), o.delay));
  }
  return out;
}
