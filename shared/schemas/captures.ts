import { z } from 'zod';
import { CAPTURE_FORMATS, FRAME_KINDS, FRAME_STATUSES, LINE_EVENT_KINDS, LINK_DIRECTIONS } from '../decoder';
import type { ExchangeOutcomeName } from './calls';
import { clockEdgeSchema, encodingSchema } from './rigs';

export const captureFormatSchema = z.enum(CAPTURE_FORMATS);
export type CaptureFormatName = z.infer<typeof captureFormatSchema>;

export const frameStatusSchema = z.enum(FRAME_STATUSES);
export const frameKindSchema = z.enum(FRAME_KINDS);
export const lineEventKindSchema = z.enum(LINE_EVENT_KINDS);

/** Which direction a link carries, relative to the rig's stations. */
export const linkDirectionSchema = z.enum(LINK_DIRECTIONS);

export const linkRoleSchema = z.object({
  /** data channel name as the capture names it */
  channel: z.string().min(1, 'Choose the data channel'),
  direction: linkDirectionSchema.default('unknown'),
  /** station address this link belongs to (the station's end of the line), if known */
  stationAddress: z.number().int().min(0).max(255).nullable().default(null),
  /** display label, e.g. "port 2, station → server" */
  label: z.string().trim().max(80).default(''),
});

export const handshakeRoleSchema = z.object({
  channel: z.string().min(1),
  /** RTS, CTS, DCD or another name */
  name: z.string().trim().min(1).max(20),
  /** the link (data channel name) this line belongs to, if any */
  link: z.string().nullable().default(null),
  /**
   * the station whose line this is, if known. On a multidrop line several stations share the
   * data wires but each has its own request line, so the line names its station rather than a
   * link; when null, a line attached to a link belongs to that link's station.
   */
  stationAddress: z.number().int().min(0).max(255).nullable().default(null),
});

/** The channel-role form: what the user says about the capture before it is decoded. */
export const captureSettingsSchema = z
  .object({
    format: captureFormatSchema,
    /** samples per second; required for raw binary and sample-index CSV */
    sampleRate: z.coerce.number().positive('Enter a positive sample rate').max(1e12).nullable().default(null),
    /** raw binary: bytes per sample */
    rawWidth: z.union([z.literal(1), z.literal(2)]).default(1),
    /** raw binary: names of bits 0, 1, 2… (empty → "0", "1", …) */
    channelNames: z.array(z.string().trim().min(1).max(40)).max(16).default([]),
    /** clock channel; null → recover the clock from data at bitRate */
    clock: z.string().nullable().default(null),
    links: z.array(linkRoleSchema).min(1, 'Choose at least one data channel').max(16),
    handshake: z.array(handshakeRoleSchema).max(16).default([]),
    bitRate: z.coerce.number().int().min(50).max(100_000_000).nullable().default(null),
    encoding: encodingSchema,
    edge: clockEdgeSchema,
    invert: z.boolean().default(false),
    /** frame check sequence width: 16 (CRC-16/IBM-SDLC) or 32 (CRC-32/ISO-HDLC) */
    fcs: z.union([z.literal(16), z.literal(32)]).default(16),
  })
  .superRefine((s, ctx) => {
    if (s.clock === null && s.bitRate === null && s.format !== 'framelog' && s.format !== 'octets') {
      ctx.addIssue({ code: 'custom', path: ['bitRate'], message: 'Without a clock channel, enter the nominal bit rate' });
    }
    if (s.format === 'raw' && s.sampleRate === null) {
      ctx.addIssue({ code: 'custom', path: ['sampleRate'], message: 'Raw binary samples need the sample rate' });
    }
    const seen = new Set<string>();
    s.links.forEach((l, i) => {
      if (seen.has(l.channel)) ctx.addIssue({ code: 'custom', path: ['links', i, 'channel'], message: 'This channel is already a link' });
      seen.add(l.channel);
      if (s.clock !== null && l.channel === s.clock) {
        ctx.addIssue({ code: 'custom', path: ['links', i, 'channel'], message: 'The clock channel cannot also be a data channel' });
      }
    });
  });
export type CaptureSettings = z.infer<typeof captureSettingsSchema>;
export type CaptureSettingsInput = z.input<typeof captureSettingsSchema>;

export const captureStatusSchema = z.enum(['uploaded', 'queued', 'decoding', 'decoded', 'failed', 'cancelled', 'interrupted']);
export type CaptureStatus = z.infer<typeof captureStatusSchema>;

export interface DetectedChannel {
  name: string;
  /** VCD scope path, CSV column index, or raw bit index */
  source: string;
  /** suggested role from names and activity */
  suggested: 'clock' | 'data' | 'handshake' | 'unused';
  /** transitions seen in the head of the file (activity hint) */
  transitions: number;
}

export interface Detection {
  format: CaptureFormatName | null;
  reason: string;
  channels: DetectedChannel[];
  /** sample rate found in the file (VCD timescale, CSV time column), if any */
  sampleRate: number | null;
  /** settings prefilled from the detection and the rig's line settings */
  suggested: CaptureSettingsInput | null;
}

export const DECODE_JOB_STATES = ['queued', 'running', 'done', 'failed', 'cancelled', 'interrupted'] as const;

export interface DecodeJob {
  id: number;
  captureId: number;
  state: (typeof DECODE_JOB_STATES)[number];
  stage: string;
  bytesRead: number;
  bytesTotal: number;
  frames: number;
  /** the decoder's message when failed, with the file position */
  error: string | null;
  /** what the decoder read past in a finished run (malformed lines, unknown levels…), with positions */
  warnings: string[];
  startedAt: string | null;
  finishedAt: string | null;
}

export interface CaptureSummaryRow {
  id: number;
  rigId: number;
  name: string;
  size: number;
  sha256: string;
  format: CaptureFormatName | null;
  status: CaptureStatus;
  uploadedBy: string;
  uploadedAt: string;
  settings: CaptureSettings | null;
  /** latest decode job, if any */
  job: DecodeJob | null;
  frameCount: number;
  /** false when the capture was decoded in the uploader's browser: only its frames are here, the samples stayed on their machine */
  samplesKept: boolean;
}

export interface LinkStats {
  name: string;
  label: string;
  direction: z.infer<typeof linkDirectionSchema>;
  stationAddress: number | null;
  frames: number;
  octets: number;
  /** share of the link's time spent inside frames, 0–1 */
  utilisation: number;
}

export interface CaptureOverview {
  capture: CaptureSummaryRow;
  durationSeconds: number;
  samplePeriodSeconds: number;
  links: LinkStats[];
  byStatus: Record<z.infer<typeof frameStatusSchema>, number>;
  byKind: Record<string, number>;
  /** stations seen by address, with the rig's name when it has one */
  stations: { address: number; name: string | null; frames: number }[];
  /** frames per time bin, by status, for charts */
  timeBins: { binSeconds: number; start: number; counts: Record<string, number[]> };
  /** gaps between consecutive frames on the same link, seconds, histogram */
  gapHistogram: { edges: number[]; counts: number[] };
  lineEvents: number;
}

/** One row of the timeline: a frame or a line event. */
export interface TimelineFrame {
  type: 'frame';
  id: number;
  link: string;
  seq: number;
  /** seconds from capture start to the first bit after the opening flag */
  t: number;
  tEnd: number;
  status: z.infer<typeof frameStatusSchema>;
  address: number | null;
  stationName: string | null;
  kind: z.infer<typeof frameKindSchema> | null;
  command: string | null;
  ns: number | null;
  nr: number | null;
  pf: boolean | null;
  infoLength: number;
  /** address..info octets (no FCS), lower-case hex, truncated to 64 octets in lists */
  hex: string;
  summary: string;
  /** timeline rows only: how many notes are pinned to this frame (by link + seq); absent when none */
  notes?: number;
  /** timeline rows only: the frame's part in an exchange of the visible call run; absent when none */
  call?: TimelineCallMarker;
}

/** A frame's part in an exchange, as the timeline marks it. */
export interface TimelineCallMarker {
  exchangeId: number;
  /** damaged-response: a bad-FCS answer the station answered with a retry (ExchangeRow.damagedResponseFrameIds) */
  role: 'request' | 'retry' | 'response' | 'damaged-response';
  station: number;
  /** the call's name, or "call <code>" when the map names none */
  callName: string;
  rttSeconds: number | null;
  outcome: ExchangeOutcomeName;
}

export interface TimelineEvent {
  type: 'event';
  id: number;
  link: string | null;
  channel: string;
  kind: z.infer<typeof lineEventKindSchema>;
  t: number;
  tEnd: number | null;
  count: number | null;
  summary: string;
}

export type TimelineRow = TimelineFrame | TimelineEvent;

const csvList = <T extends z.ZodTypeAny>(item: T) =>
  z.preprocess((v) => (typeof v === 'string' ? (v === '' ? [] : v.split(',')) : v), z.array(item));

/** Timeline filters: also the URL search params of the timeline view. */
export const timelineQuerySchema = z.object({
  /** opaque keyset cursor from a previous page */
  cursor: z.string().max(200).optional(),
  direction: z.enum(['forward', 'backward']).default('forward'),
  limit: z.coerce.number().int().min(1).max(1000).default(200),
  link: csvList(z.string().min(1)).optional(),
  station: csvList(z.coerce.number().int().min(0).max(255)).optional(),
  status: csvList(frameStatusSchema).optional(),
  kind: csvList(frameKindSchema).optional(),
  command: csvList(z.string().min(1).max(10)).optional(),
  /** seconds */
  from: z.coerce.number().min(0).optional(),
  to: z.coerce.number().min(0).optional(),
  /** text searched in the information field (ASCII, case-insensitive) */
  text: z.string().max(200).optional(),
  /** hex byte pattern anywhere in the frame, e.g. "14 00" or "1400"; ?? matches any byte */
  hex: z
    .string()
    .max(400)
    .regex(/^(\s*([0-9a-fA-F]{2}|\?\?)\s*)*$/, 'Use pairs of hex digits, ?? for any byte')
    .optional(),
  /** include line events between frames */
  events: z.preprocess((v) => v === '1' || v === 'true' || v === true, z.boolean()).default(true),
});
export type TimelineQuery = z.infer<typeof timelineQuerySchema>;

export interface TimelinePage {
  rows: TimelineRow[];
  /** cursor for the next page in the same direction, null at the end */
  nextCursor: string | null;
  /** cursor for the page before this one, null at the start */
  prevCursor: string | null;
}

export interface FrameDetail {
  frame: TimelineFrame & {
    firstSample: number;
    lastSample: number;
    bitLength: number;
    /** all octets between flags, FCS included, lower-case hex */
    hexAll: string;
    fcsReceived: number | null;
    fcsComputed: number | null;
    flippedBit: number | null;
    stuffed: number[];
  };
  /** the previous and next frame ids on the same link */
  prevId: number | null;
  nextId: number | null;
}

/** GET …/frames/:frameId/waveform: context bits either side of the frame, and the drawing columns the changes are thinned to */
export const waveformQuerySchema = z.object({
  bits: z.coerce.number().int().min(1).max(4096).default(16),
  points: z.coerce.number().int().min(16).max(20_000).default(2000),
});

export interface WaveformWindow {
  /** sample index range of the window: the frame and its context bits, at most MAX_WINDOW_BITS line bits */
  fromSample: number;
  toSample: number;
  samplePeriodSeconds: number;
  /** the frame's samples per line bit (its sample span over its line bits) */
  samplesPerBit: number;
  /**
   * each channel as level changes inside the window: [sample, level] pairs, the first at fromSample;
   * `thinned` when a drawing column held more than three changes (the first two and the last are kept,
   * so a busy stretch still draws as a stroke and every column ends at the right level)
   */
  channels: { name: string; role: 'clock' | 'data' | 'handshake'; changes: [number, number][]; thinned: boolean }[];
}
