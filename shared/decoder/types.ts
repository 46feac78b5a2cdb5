// The contracts between decoder stages. Every stage is an object with push(chunk) and
// finish(); it emits to the next stage through a sink given at construction, so any split
// of the input into chunks gives the same output.
//
//   reader (bytes → Transitions) → bits (Transitions → BitChunk per link)
//     → deframer (BitChunk → RawFrame) → fcs + link (RawFrame → DecodedFrame)
//
// Time stays an integer sample index (a float64 holding an integer, so captures beyond
// 2^32 samples work) until it is shown; seconds = sample * samplePeriod.

/** A problem in the input, kept as a value with its position and turned into a message at the edge. */
export interface DecodeIssue {
  /** byte offset in the input where the problem was found */
  offset: number;
  /** 1-based line number for text formats */
  line?: number;
  /** what the reader expected there */
  expected: string;
  /** a sentence a user can act on */
  message: string;
  /**
   * True when part of the input could not be read and was dropped (a malformed line, token or
   * cell). Tolerant callers (the web app) decode the rest and show it; strict ones (the CLI)
   * treat it as bad input.
   */
  skipped?: boolean;
  /**
   * Set when the problem is a setting left out or not fitting the capture (named as in
   * DecoderOptions: 'data', 'bitRate', 'sampleRate', 'clock', 'handshake'), not a place in the
   * file: `offset` and `line` then say nothing and are not shown.
   */
  setting?: string;
  /** a problem of the file's structure that makes it malformed as a whole (checked at upload) */
  code?: 'time-back' | 'time-range' | 'no-enddefinitions' | 'header-too-long';
}

/** Thrown only at the boundary between the decoder and its caller (CLI, API): never from hot loops. */
export class DecodeError extends Error {
  constructor(public readonly issue: DecodeIssue) {
    super(issue.message);
    this.name = 'DecodeError';
  }
}

export const CAPTURE_FORMATS = ['vcd', 'csv', 'raw', 'octets', 'framelog'] as const;
export type CaptureFormat = (typeof CAPTURE_FORMATS)[number];

export interface ChannelInfo {
  /** index used in Transitions.channel */
  index: number;
  /** display and addressing name: VCD reference (scope.name when ambiguous), CSV header, raw name or bit index */
  name: string;
}

/**
 * Level changes of the captured channels, in time order across channels.
 * A reader first emits one transition per channel at sample 0 (or its first known sample)
 * giving the initial level, then one per change. Unknown values (VCD x/z) are value 2.
 * When the input ends, a reader repeats each channel's current level at the last sample the
 * capture covers (a transition whose value equals the level: no change), so bit recovery
 * knows how far the capture reaches. The arrays are reused between calls.
 */
export interface Transitions {
  channel: Uint8Array;
  sample: Float64Array;
  value: Uint8Array;
  /** number of valid entries */
  n: number;
}

/** Recovered line bits of one link after NRZ/NRZI decoding and inversion. */
export interface BitChunk {
  /** one bit per element, 0 or 1, valid in [0, n); not filled when `packed` is given */
  bits: Uint8Array;
  /**
   * The same bits packed eight to a byte, first bit in bit 0, valid for bit indices [0, n).
   * A producer that fills this may leave `bits` unfilled; only the deframer reads chunks from
   * such producers (the fused raw path), and it prefers this form when present.
   */
  packed?: Uint8Array;
  /** sample index at which each bit was taken */
  samples: Float64Array;
  n: number;
}

export const FRAME_STATUSES = ['ok', 'bad-fcs', 'abort', 'short', 'residue'] as const;
export type FrameStatus = (typeof FRAME_STATUSES)[number];

/** One frame between flags as the deframer found it, before FCS and link decode. */
export interface RawFrame {
  /** link name (the data channel's name) */
  link: string;
  /** 0-based order of this frame on its link */
  seq: number;
  /** sample index of the first bit after the opening flag */
  firstSample: number;
  /**
   * sample index of the last data bit before the closing flag (or abort); a 0 the transmitter
   * stuffed after it is not counted, so a frame's end does not move when its FCS needs stuffing
   */
  lastSample: number;
  /** every whole octet between the flags, FCS included, LSB-first assembly as HDLC sends them */
  bytes: Uint8Array;
  /** number of bits after zero-bit deletion (bytes.length * 8 + residue bits) */
  bitLength: number;
  /** bit positions, counted in the line bits after the opening flag, of the deleted stuffing zeros */
  stuffed: number[];
  /** abort / short / residue are decided here; ok vs bad-fcs by the FCS stage */
  status: FrameStatus;
}

export const FRAME_KINDS = ['I', 'S', 'U'] as const;
export type FrameKind = (typeof FRAME_KINDS)[number];

export interface LinkDecode {
  address: number;
  control: number;
  kind: FrameKind;
  /** RR, RNR, REJ, SREJ, SNRM, UA, UI, … or 'I' for information frames; '?' for unknown U codes */
  command: string;
  ns: number | null;
  nr: number | null;
  /** poll/final bit */
  pf: boolean;
  /** offset in bytes of the information field (2 for modulo-8 control) */
  infoOffset: number;
  /** length of the information field (octets between control and FCS) */
  infoLength: number;
}

export interface DecodedFrame extends RawFrame {
  /** FCS as received: the first octet on the wire is the low-order byte; null when too short */
  fcsReceived: number | null;
  /** FCS computed over address, control and information; null when too short */
  fcsComputed: number | null;
  /**
   * For a bad-fcs frame: index of the single bit (in destuffed transmission order, counted
   * from the first bit of the address, FCS bits included) whose flip makes the FCS good; null if none.
   */
  flippedBit: number | null;
  /** null for frames too short to carry address and control */
  decode: LinkDecode | null;
}

export const LINE_EVENT_KINDS = ['rise', 'fall', 'idle', 'flags', 'unknown'] as const;
export type LineEventKind = (typeof LINE_EVENT_KINDS)[number];

/** A change on a handshake line, an idle period or a stretch of fill flags. */
export interface LineEvent {
  link: string | null;
  channel: string;
  kind: LineEventKind;
  sample: number;
  /** for idle and flags: sample index where the stretch ended */
  endSample?: number;
  /** for flags: how many fill flags */
  count?: number;
}

// ---- Stage interfaces (implemented in readers/, bits.ts, deframe.ts; composed in pipeline.ts) ----

export interface ReaderOptions {
  /** samples per second: required for raw binary and for CSV with a sample-index column */
  sampleRate?: number;
  /** names for raw-binary bits 0,1,2…; defaults to "0","1",… */
  channelNames?: string[];
  /** raw binary sample width in bytes */
  rawWidth?: 1 | 2;
  /** line bit/s: for octet streams (sample = bit) and frame-log frame ends */
  bitRate?: number;
  /** VCD vectors to read as one channel per bit, named reference[bit] (by reference or scope.reference) */
  vcdBuses?: string[];
}

/** What a sample-based reader (VCD, CSV, raw) tells the next stage. */
export interface TransitionSink {
  /** called once, before any transitions, when the channel list and time base are known */
  header(channels: ChannelInfo[], samplePeriodSeconds: number): void;
  transitions(t: Transitions): void;
}

/** What a reader of pre-cut frames (frame log) emits: frames with bytes, FCS included. */
export interface FrameLogSink {
  header(links: ChannelInfo[], samplePeriodSeconds: number): void;
  frame(link: string, firstSample: number, lastSample: number, bytes: Uint8Array): void;
}

/** What a reader of raw line-bit octets emits: line bits straight from the adapter. */
export interface LineBitSink {
  header(links: ChannelInfo[], samplePeriodSeconds: number): void;
  bits(link: string, chunk: BitChunk): void;
}

/**
 * Every reader has this shape. Problems are collected as values in `issues`; a fatal one
 * stops the reader (later pushes are ignored) and is also returned by `fatal()`.
 */
export interface CaptureReader {
  push(chunk: Uint8Array): void;
  finish(): void;
  /** bytes consumed so far, for progress */
  readonly bytesRead: number;
  issues: DecodeIssue[];
  fatal(): DecodeIssue | null;
}

/** line coding of the data channel: NRZ, or NRZI (a 0 bit toggles the line) */
export const LINE_ENCODINGS = ['nrz', 'nrzi'] as const;
export type LineEncoding = (typeof LINE_ENCODINGS)[number];
/** the clock edge on which a data bit is taken */
export const CLOCK_EDGES = ['rising', 'falling'] as const;
export type ClockEdge = (typeof CLOCK_EDGES)[number];

export interface BitRecoveryOptions {
  samplePeriodSeconds: number;
  /** channel index of the clock; omit to recover the clock from data transitions */
  clock?: number;
  /** data channel index per link, with the link's name */
  data: { channel: number; link: string }[];
  /** handshake channels (RTS/CTS/DCD…) that become line events */
  handshake?: { channel: number; name: string; link?: string }[];
  edge: ClockEdge;
  encoding: LineEncoding;
  invert: boolean;
  /** nominal bit/s, required when clock is omitted */
  bitRate?: number;
}

export interface BitRecoverySink {
  bits(link: string, chunk: BitChunk): void;
  event(e: LineEvent): void;
}

export interface FrameSink {
  frame(f: DecodedFrame): void;
  event(e: LineEvent): void;
}
