// The whole decoder behind one push/finish object: capture bytes in, decoded frames and line
// events out, in time order across links.
//
//   reader ─(transitions)→ BitRecovery ─(bits per link)→ Deframer per link → checkFrame ┐
//   reader ─(line-bit octets)───────────────────────────→ Deframer per link → checkFrame ├→ TimeOrder → sink
//   reader ─(frame log)─────────────────────────────────────────────────────→ checkFrame ┘
//
// Channels are named by string in the options and resolved when the reader's header arrives;
// a name the capture does not have becomes a fatal DecodeIssue listing the names it has.
import { BitRecovery } from './bits';
import { AnomalyTap, type AnomalySink } from './faults/anomalies';
import { checkFrame } from './check';
import { Deframer } from './deframe';
import { ClockedRawBits } from './raw-clocked';
import { createReader } from './readers';
import { detectFormat } from './readers/detect';
import { TimeOrder } from './time-order';
import type {
  BitChunk,
  BitRecoveryOptions,
  CaptureFormat,
  CaptureReader,
  ChannelInfo,
  ClockEdge,
  DecodeIssue,
  FrameSink,
  LineEncoding,
  LineEvent,
  RawFrame,
  ReaderOptions,
} from './types';

export interface DecoderOptions {
  format: CaptureFormat | 'auto';
  /** samples per second (raw binary; CSV with a sample-index column) */
  sampleRate?: number;
  /** names of raw-binary bits 0, 1, 2… */
  channelNames?: string[];
  rawWidth?: 1 | 2;
  /** VCD vectors to read as one channel per bit (named like `port[7]`) */
  vcdBuses?: string[];
  /** clock channel name; omit to recover the clock from the data at bitRate */
  clock?: string;
  /** one link per data channel; for octet streams and frame logs, the links to keep (default all) */
  data?: string[];
  handshake?: string[];
  edge?: ClockEdge;
  encoding?: LineEncoding;
  invert?: boolean;
  bitRate?: number;
  fcs?: 16 | 32;
  /** frames and events held for time ordering before the earliest is let out regardless */
  maxHeld?: number;
  /**
   * Raw binary with a clock goes through one fused loop from bytes to packed bits (default);
   * false sends it through transitions and bit recovery like every other format, the path the
   * fused one is tested against.
   */
  rawFastPath?: boolean;
  /**
   * Receives the line anomalies of sample captures (VCD, CSV, raw): glitches, clock edges missing
   * or extra, unknown levels, silences. The fused raw path feeds them from the edges it sees.
   */
  anomalies?: AnomalySink;
  /** frames' octets may share ArrayBuffers (DeframerOptions.sharedBytes): for a sink that keeps no frame long */
  sharedFrameBytes?: boolean;
  /** false: line events (idle, fill flags, handshake changes) are neither made nor passed to the sink; frames are the same */
  lineEvents?: boolean;
}

export interface Decoder {
  /** the next bytes of the capture; nothing of them is kept after the call, so the caller may reuse the array */
  push(bytes: Uint8Array): void;
  finish(): void;
  readonly bytesRead: number;
  readonly issues: DecodeIssue[];
  fatal(): DecodeIssue | null;
  /** link names, known once the capture's header was read */
  readonly links: string[];
  /** seconds per sample index, known once the capture's header was read */
  readonly samplePeriodSeconds: number | null;
  /** the format in use (the detected one for 'auto'), null until known */
  readonly format: CaptureFormat | null;
}

/** a bit recovered from the data must span at least this many samples (common practice) */
export const MIN_SAMPLES_PER_BIT = 2;

function fmt(n: number): string {
  return Number.isFinite(n) ? String(Number(n.toPrecision(4))) : String(n);
}

/** Bytes looked at before guessing the format of an 'auto' capture. */
const DETECT_BYTES = 16 * 1024;

export function createDecoder(options: DecoderOptions, sink: FrameSink): Decoder {
  const fcsWidth = options.fcs === 32 ? 32 : 16;
  const minOctets = fcsWidth === 32 ? 6 : 4;
  const order = new TimeOrder(sink, options.maxHeld);
  const checkOptions = { fcs: fcsWidth } as const;
  const ownIssues: DecodeIssue[] = [];
  let ownFatal: DecodeIssue | null = null;
  let reader: CaptureReader | null = null;
  let format: CaptureFormat | null = options.format === 'auto' ? null : options.format;
  let head: Uint8Array[] = [];
  let headLength = 0;
  let period: number | null = null;
  const links: string[] = [];
  const deframers = new Map<string, Deframer>();
  const deframerList: Deframer[] = [];
  let recovery: BitRecovery | ClockedRawBits | null = null;
  let tap: AnomalyTap | null = null;
  const frameLogSeq = new Map<string, number>();
  let finished = false;

  const fail = (issue: DecodeIssue) => {
    if (ownFatal) return;
    ownFatal = issue;
    ownIssues.push(issue);
  };
  const fatal = () => ownFatal ?? reader?.fatal() ?? null;

  const lineEvents = options.lineEvents !== false;
  const toOrder = {
    frame: (raw: RawFrame) => order.frame(checkFrame(raw, checkOptions)),
    event: (e: LineEvent) => {
      if (lineEvents) order.event(e);
    },
  };

  const addLink = (name: string) => {
    const d = new Deframer(name, toOrder, { minOctets, sharedBytes: options.sharedFrameBytes === true, events: lineEvents });
    deframers.set(name, d);
    deframerList.push(d);
    links.push(name);
  };

  /** Resolves a channel name against the capture's channels, exact first, then ignoring case. */
  const resolve = (channels: ChannelInfo[], name: string, role: string): ChannelInfo | null => {
    const found = channels.find((c) => c.name === name) ?? uniqueCaseless(channels, name);
    if (!found) {
      fail({
        offset: reader?.bytesRead ?? 0,
        expected: `a ${role} channel named one of: ${channels.map((c) => c.name).join(', ')}`,
        message: `The capture has no channel "${name}" (given as ${role}); its channels are ${channels.map((c) => c.name).join(', ')}.`,
        setting: role,
      });
    }
    return found ?? null;
  };

  const sampleSink = {
    header(channels: ChannelInfo[], samplePeriodSeconds: number) {
      period = samplePeriodSeconds;
      const dataNames = options.data ?? [];
      if (dataNames.length === 0) {
        fail({
          offset: reader?.bytesRead ?? 0,
          expected: 'the data channel(s) to decode',
          message: `Name the data channel(s) that carry the frames; the capture's channels are ${channels.map((c) => c.name).join(', ')}.`,
          setting: 'data',
        });
        return;
      }
      const clock = options.clock !== undefined ? resolve(channels, options.clock, 'clock') : null;
      const data = dataNames.map((n) => resolve(channels, n, 'data'));
      const handshake = (options.handshake ?? []).map((n) => resolve(channels, n, 'handshake'));
      if (ownFatal) return;
      if (!clock && !(options.bitRate && options.bitRate > 0)) {
        fail({
          offset: 0,
          expected: 'a bit rate or a clock channel',
          message: 'Without a clock channel the bit clock is recovered from the data: give the nominal bit rate (bit/s).',
          setting: 'bitRate',
        });
        return;
      }
      if (!clock) {
        const samplesPerBit = 1 / (options.bitRate! * samplePeriodSeconds);
        if (!(samplesPerBit >= MIN_SAMPLES_PER_BIT)) {
          fail({
            offset: 0,
            expected: `a bit rate of at most ${fmt(1 / (MIN_SAMPLES_PER_BIT * samplePeriodSeconds))} bit/s at this sample rate`,
            message: `At ${fmt(1 / samplePeriodSeconds)} samples per second a bit of ${fmt(options.bitRate!)} bit/s spans ${samplesPerBit.toPrecision(3)} samples; recovering the clock from the data needs at least ${MIN_SAMPLES_PER_BIT} samples per bit (common practice: 4 or more). Check the sample rate against the bit rate.`,
            setting: 'bitRate',
          });
          return;
        }
      }
      for (const d of data) addLink(d!.name);
      const opts: BitRecoveryOptions = {
        samplePeriodSeconds,
        clock: clock ? clock.index : undefined,
        data: data.map((d) => ({ channel: d!.index, link: d!.name })),
        handshake: handshake.map((h) => ({ channel: h!.index, name: h!.name })),
        edge: options.edge ?? 'rising',
        encoding: options.encoding ?? 'nrz',
        invert: options.invert ?? false,
        bitRate: options.bitRate,
      };
      const bitSink = {
        bits: (link: string, chunk: BitChunk) => deframers.get(link)!.push(chunk),
        event: toOrder.event,
      };
      if (options.anomalies) tap = new AnomalyTap({ ...opts, clockName: clock?.name }, options.anomalies);
      recovery = canFuse(opts) ? new ClockedRawBits(opts, bitSink, tap) : new BitRecovery(opts, bitSink);
    },
    transitions(t: Parameters<BitRecovery['transitions']>[0]) {
      if (recovery instanceof BitRecovery && !ownFatal) {
        recovery.transitions(t);
        tap?.transitions(t);
      }
    },
    rawConsumer() {
      return recovery instanceof ClockedRawBits && !ownFatal ? recovery : null;
    },
  };

  /** the fused raw path covers raw samples with a clock whose channels each have one role */
  const canFuse = (opts: BitRecoveryOptions): boolean => {
    if (format !== 'raw' || options.rawFastPath === false || opts.clock === undefined) return false;
    const used = [opts.clock, ...opts.data.map((d) => d.channel), ...(opts.handshake ?? []).map((h) => h.channel)];
    return new Set(used).size === used.length;
  };

  // Octet streams carry line bits straight from the adapter; NRZI and inversion still apply.
  const lineCoding = new Map<string, { last: number }>();
  const octetSink = {
    header(found: ChannelInfo[], samplePeriodSeconds: number) {
      period = samplePeriodSeconds;
      const wanted = options.data && options.data.length > 0 ? options.data.map((n) => resolve(found, n, 'data')) : found;
      if (ownFatal) return;
      for (const l of wanted) addLink(l!.name);
    },
    bits(link: string, chunk: BitChunk) {
      const d = deframers.get(link);
      if (!d || ownFatal) return;
      if (options.encoding === 'nrzi' || options.invert) recode(link, chunk);
      d.push(chunk);
    },
  };
  const recode = (link: string, chunk: BitChunk) => {
    let state = lineCoding.get(link);
    if (!state) lineCoding.set(link, (state = { last: 1 }));
    const b = chunk.bits;
    const inv = options.invert ? 1 : 0;
    if (options.encoding === 'nrzi') {
      // NRZI: a 0 is a change of level, a 1 keeps it (common practice for HDLC NRZI).
      let last = state.last;
      for (let i = 0; i < chunk.n; i++) {
        const level = b[i] ^ inv;
        b[i] = level === last ? 1 : 0;
        last = level;
      }
      state.last = last;
    } else {
      for (let i = 0; i < chunk.n; i++) b[i] ^= 1;
    }
  };

  const frameLogSink = {
    header(found: ChannelInfo[], samplePeriodSeconds: number) {
      period = samplePeriodSeconds;
      const wanted = options.data && options.data.length > 0 ? options.data.map((n) => resolve(found, n, 'data')) : found;
      if (ownFatal) return;
      for (const l of wanted) {
        links.push(l!.name);
        frameLogSeq.set(l!.name, 0);
      }
    },
    frame(link: string, firstSample: number, lastSample: number, bytes: Uint8Array) {
      if (ownFatal) return;
      let seq = frameLogSeq.get(link);
      if (seq === undefined) {
        // A link first named after the log's head: kept unless the caller chose links.
        if (options.data && options.data.length > 0) return;
        links.push(link);
        seq = 0;
      }
      frameLogSeq.set(link, seq + 1);
      const raw: RawFrame = {
        link,
        seq,
        firstSample,
        lastSample,
        bytes,
        bitLength: bytes.length * 8,
        stuffed: [],
        status: bytes.length < minOctets ? 'short' : 'ok',
      };
      // Frame logs are written in time order; frames go out as they come.
      order.frame(checkFrame(raw, checkOptions));
      order.release(firstSample);
    },
  };

  const start = (f: CaptureFormat) => {
    format = f;
    const readerOpts: ReaderOptions = {
      sampleRate: options.sampleRate,
      channelNames: options.channelNames,
      rawWidth: options.rawWidth,
      bitRate: options.bitRate,
      vcdBuses: options.vcdBuses,
    };
    const s = f === 'framelog' ? frameLogSink : f === 'octets' ? octetSink : sampleSink;
    reader = createReader(f, readerOpts, s as never);
  };

  const pushToReader = (bytes: Uint8Array) => {
    if (!reader || fatal()) return;
    reader.push(bytes);
    releaseSettled();
  };

  const releaseSettled = () => {
    if (deframerList.length === 0) return;
    let w = Infinity;
    for (const d of deframerList) w = Math.min(w, d.pendingFrom());
    order.release(w);
  };

  const detect = () => {
    const all = new Uint8Array(headLength);
    let at = 0;
    for (const h of head) {
      all.set(h, at);
      at += h.length;
    }
    head = [];
    const guess = detectFormat(all);
    if (!guess.format) {
      fail({
        offset: 0,
        expected: 'a VCD, CSV sample table, raw binary samples, line-bit octets or a frame log',
        message: `Cannot tell the capture's format: ${guess.reason} Choose the format explicitly.`,
      });
      return;
    }
    start(guess.format);
    pushToReader(all);
  };

  if (format) start(format);

  return {
    push(bytes: Uint8Array) {
      if (finished || fatal() || bytes.length === 0) return;
      if (!reader) {
        head.push(bytes.slice());
        headLength += bytes.length;
        if (headLength >= DETECT_BYTES) detect();
        return;
      }
      pushToReader(bytes);
    },
    finish() {
      if (finished) return;
      finished = true;
      if (!reader && !ownFatal) {
        if (headLength === 0) {
          fail({ offset: 0, expected: 'capture data', message: 'The capture is empty.' });
          return;
        }
        detect();
      }
      if (!reader || ownFatal) return;
      if (!reader.fatal()) reader.finish();
      const r: BitRecovery | ClockedRawBits | null = recovery;
      if (r && !fatal()) r.finish();
      if (tap && !fatal()) tap.finish();
      for (const d of deframerList) d.finish();
      order.flush();
    },
    get bytesRead() {
      return reader ? reader.bytesRead : 0;
    },
    get issues() {
      return [...ownIssues, ...(reader ? reader.issues : [])];
    },
    fatal,
    get links() {
      return links;
    },
    get samplePeriodSeconds() {
      return period;
    },
    get format() {
      return format;
    },
  };
}

function uniqueCaseless(channels: ChannelInfo[], name: string): ChannelInfo | undefined {
  const lower = name.toLowerCase();
  const matches = channels.filter((c) => c.name.toLowerCase() === lower);
  return matches.length === 1 ? matches[0] : undefined;
}
