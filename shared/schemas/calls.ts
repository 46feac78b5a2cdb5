// The call layer API: field maps, a capture's chosen map, exchanges, recovered files, the call
// decode of one frame, and the comparison of two captures. Request schemas (zod) and the shapes
// of the answers. The field-map document itself is validated by shared/decoder/calls/field-map.ts.
import { z } from 'zod';
import { COMPARISON_KINDS, EXCHANGE_OUTCOMES } from '../decoder/calls';
import type { FieldMapInput, FileSizeSource, LockConflictOutcome as DecodedLockOutcome, RecordCoverage, RecoveredFileKind } from '../decoder/calls';

const csvList = <T extends z.ZodTypeAny>(item: T) =>
  z.preprocess((v) => (typeof v === 'string' ? (v === '' ? [] : v.split(',')) : v), z.array(item));

// ---- field maps ----

export interface FieldMapSummary {
  id: number;
  name: string;
  /** latest version */
  version: number;
  /** the built-in "CP/M call envelope": read-only, copy it to change it */
  builtIn: boolean;
  updatedAt: string;
  /** display name of whoever saved the latest version; null for the built-in */
  updatedBy: string | null;
}

export interface FieldMapVersionInfo {
  version: number;
  createdAt: string;
  createdBy: string | null;
}

export interface FieldMapDetail {
  id: number;
  name: string;
  /** the version whose document this is (latest unless ?version= asked for another) */
  version: number;
  latestVersion: number;
  builtIn: boolean;
  /** the document as saved (FieldMapInput of shared/decoder/calls/field-map.ts) */
  document: FieldMapInput;
  /** newest first */
  versions: FieldMapVersionInfo[];
}

/** GET …/field-maps/:mapId?version=N */
export const fieldMapQuerySchema = z.object({
  version: z.coerce.number().int().min(1).optional(),
});

/**
 * POST …/field-maps: either a new document or a copy of an existing map (its latest version,
 * or `copyVersion`). The document's `name` and `version` are set by the server from `name` and
 * the version counter.
 */
export const fieldMapCreateSchema = z
  .object({
    name: z.string().trim().min(1, 'Give the map a name').max(100),
    document: z.unknown().optional(),
    copyOf: z.number().int().positive().optional(),
    copyVersion: z.number().int().min(1).optional(),
  })
  .refine((b) => (b.document === undefined) !== (b.copyOf === undefined), {
    message: 'Send either a document or copyOf (the map to copy)',
    path: ['document'],
  });
export type FieldMapCreate = z.infer<typeof fieldMapCreateSchema>;

/**
 * PUT …/field-maps/:mapId: saves a new version. `baseVersion` is the version the editor opened;
 * 409 when someone saved a later one meanwhile. A document that does not validate gives 400 with
 * `fields` keyed by the document path, e.g. { "document.layouts[2].fields[3].length": "…" }.
 */
export const fieldMapSaveSchema = z.object({
  document: z.unknown().refine((d) => d !== undefined && d !== null, 'Send the field map document'),
  baseVersion: z.number().int().min(1),
  /** rename at the same time (default: keep the name) */
  name: z.string().trim().min(1).max(100).optional(),
});
export type FieldMapSave = z.infer<typeof fieldMapSaveSchema>;

// ---- a capture's call layer ----

/** PUT …/captures/:captureId/field-map: choose the map (latest version unless `version`) and re-run the call layer. */
export const captureFieldMapSchema = z.object({
  mapId: z.number().int().positive(),
  version: z.number().int().min(1).optional(),
});
export type CaptureFieldMapInput = z.infer<typeof captureFieldMapSchema>;

export const CALL_RUN_STATES = ['queued', 'running', 'done', 'failed'] as const;
export type CallRunState = (typeof CALL_RUN_STATES)[number];

export interface CaptureCallLayer {
  captureId: number;
  /** the chosen map (the built-in until someone chooses another) */
  mapId: number;
  mapName: string;
  /** null = follow the latest version at each run */
  mapVersion: number | null;
  /** the run whose exchanges and files are visible, if any */
  current: { runId: number; mapId: number; mapVersion: number; exchanges: number; files: number; finishedAt: string } | null;
  /** the latest run when it is not the visible one (queued, running or failed) */
  pending: { runId: number; state: CallRunState; error: string | null } | null;
}

// ---- exchanges ----

export const exchangeOutcomeSchema = z.enum(EXCHANGE_OUTCOMES);
export type ExchangeOutcomeName = z.infer<typeof exchangeOutcomeSchema>;

export const exchangeQuerySchema = z.object({
  /** station addresses, comma separated */
  station: csvList(z.coerce.number().int().min(0).max(255)).optional(),
  /** call codes, comma separated */
  call: csvList(z.coerce.number().int().min(0).max(65535)).optional(),
  outcome: csvList(exchangeOutcomeSchema).optional(),
  /** exchanges of this recovered file only */
  file: z.coerce.number().int().positive().optional(),
  sort: z.enum(['time', 'rtt-desc']).default('time'),
  /** opaque cursor from the previous page's nextCursor */
  cursor: z.string().max(200).optional(),
  limit: z.coerce.number().int().min(1).max(1000).default(200),
});
export type ExchangeQuery = z.infer<typeof exchangeQuerySchema>;

export interface ExchangeRow {
  id: number;
  station: { address: number; name: string | null };
  call: { code: number | null; name: string | null };
  tag: number | null;
  fileName: string | null;
  recordNumber: number | null;
  status: number | null;
  statusMeaning: string | null;
  /** frame ids (timeline / inspector) */
  requestFrameId: number | null;
  retryFrameIds: number[];
  responseFrameIds: number[];
  /** seconds from capture start: first bit of the first send */
  tRequest: number;
  /** last bit of the send that was answered (or of the last send) */
  tRequestEnd: number;
  /** first bit of the first response */
  tResponse: number | null;
  rttSeconds: number | null;
  outcome: ExchangeOutcomeName;
  /** later sends of the same request */
  retries: number;
  /** RTS rise → server's first frame, when the capture has the station's RTS line */
  serviceDelaySeconds: number | null;
  /**
   * frame ids of bad-FCS answers the station answered with a retry: why the exchange was
   * retried (decoder: Exchange.damagedResponses); each also has a timeline call marker of role
   * damaged-response. Empty on runs stored before the server kept them.
   */
  damagedResponseFrameIds?: number[];
  /** lock conflicts this exchange is part of (decoder: RecoveredFile.lockConflicts); empty on runs stored before the server kept them */
  lockConflicts?: ExchangeLockConflict[];
}

/** One side of a lock conflict, seen from one of its two exchanges. */
export interface ExchangeLockConflict {
  record: number;
  /** this exchange's part: the lock held, or the other station's request for it */
  role: 'holder' | 'requester';
  other: { address: number; name: string | null };
  /** the other station's lock exchange */
  otherExchangeId: number | null;
  /** what the server answered the requester: granted (both held it), refused, or nothing */
  outcome: LockConflictOutcome;
}

export type LockConflictOutcome = DecodedLockOutcome;

export interface ExchangePage {
  rows: ExchangeRow[];
  nextCursor: string | null;
  /** exchanges matching the filters */
  total: number;
}

/** GET …/exchanges/stats?station=…: the histogram covers the chosen stations (all by default). */
export const exchangeStatsQuerySchema = z.object({
  station: csvList(z.coerce.number().int().min(0).max(255)).optional(),
  bins: z.coerce.number().int().min(1).max(200).default(30),
});

export interface RttSummary {
  min: number;
  median: number;
  p95: number;
  max: number;
  mean: number;
}

export interface StationExchangeStats {
  address: number;
  name: string | null;
  count: number;
  answered: number;
  retried: number;
  unanswered: number;
  /** over answered and retried exchanges; null when none was answered */
  rtt: RttSummary | null;
  serviceDelay: { count: number; median: number; max: number } | null;
}

export interface ExchangeStats {
  stations: StationExchangeStats[];
  /** round-trip times in seconds: counts[i] covers edges[i] ≤ rtt < edges[i+1] (last bin closed) */
  histogram: { edges: number[]; counts: number[] };
}

// ---- recovered files ----

export type RecordCoverageName = RecordCoverage;

/**
 * Where a recovered file's size came from (decoder: FileSizeSource): an end-of-file answer,
 * the compute-file-size (35) answer, an open answer's rc with ex and s2, writes to a file made or
 * extended in the capture (end known once closed), or only the highest record seen.
 */
export type FileSizeSourceName = FileSizeSource;

export interface RecoveredFileSummary {
  id: number;
  /** "NAME.TYP" */
  name: string;
  kind: RecoveredFileKind;
  /** CP/M user number; null for boot images */
  user: number | null;
  stations: number[];
  /** octets = recordCount × 128 */
  size: number;
  recordCount: number;
  /** an answer fixed the record count (sizeSource says which) */
  endKnown: boolean;
  /** where the record count came from; absent on runs stored before the server kept it (run the call layer again) */
  sizeSource?: FileSizeSourceName;
  /** the exchange whose answer (or, for written, whose write) gave the size; null for records-seen; absent with sizeSource */
  sizeExchangeId?: number | null;
  /** how many lock conflicts the file saw; absent on runs stored before the server kept them */
  lockConflicts?: number;
  /** [first, last] record ranges nobody transferred */
  missing: [number, number][];
  /** records seen with different contents in two transfers */
  conflicts: number[];
  /** every record seen, no conflict, and the end known */
  complete: boolean;
  sha256: string;
  exchangeCount: number;
}

export interface RecoveredFileDetail extends RecoveredFileSummary {
  /** per record */
  coverage: RecordCoverageName[];
  conflictDetail: { record: number; exchangeIds: number[] }[];
  /** two stations holding or asking for a lock on the same record; absent on runs stored before the server kept them */
  lockConflictDetail?: {
    record: number;
    holder: { address: number; name: string | null; exchangeId: number | null };
    requester: { address: number; name: string | null; exchangeId: number | null };
    outcome: LockConflictOutcome;
  }[];
  /** every exchange about the file (open, reads, writes, close), in time order */
  exchangeIds: number[];
}

// ---- one frame's call decode (inspector) ----

export interface FrameCallField {
  id: string;
  name: string;
  type: string;
  role: string | null;
  meaning: string | null;
  /** octet offset from the frame's first octet (the address), i.e. info offset + field offset */
  frameOffset: number;
  /** octets the map gives the field, and those present */
  length: number;
  available: number;
  truncated: boolean;
  /** the layout leaves the field out for this frame's status (onlyIfStatus): no octets, not truncated */
  absent: boolean;
  value: number | null;
  text: string | null;
  valueName: string | null;
  bits: { name: string; value: number; valueName: string | null }[] | null;
  attributes: Record<string, boolean> | null;
  display: string;
}

export interface FrameCall {
  frameId: number;
  map: { id: number; name: string; version: number };
  /** why there is no call: e.g. "bad FCS", "S frame", "link of unknown direction" */
  reason: string | null;
  call: {
    direction: 'request' | 'response';
    layout: string | null;
    callCode: number | null;
    callName: string | null;
    tag: number | null;
    user: number | null;
    fileName: string | null;
    recordNumber: number | null;
    status: number | null;
    statusMeaning: string | null;
    truncated: boolean;
    unexplained: number;
    problems: string[];
    /** offset of the information field in the frame */
    infoOffset: number;
    fields: FrameCallField[];
  } | null;
  /** the visible exchange this frame belongs to, if any */
  exchangeId: number | null;
  /** that exchange as the exchange list gives it (its request, retry and answer frames), null when none */
  exchange: ExchangeRow | null;
}

// ---- compare ----

export const comparisonKindSchema = z.enum(COMPARISON_KINDS);

export const compareQuerySchema = z.object({
  a: z.coerce.number().int().positive(),
  b: z.coerce.number().int().positive(),
  /** only rows of these kinds (default all) */
  kind: csvList(comparisonKindSchema).optional(),
});

export type ComparisonKindName = z.infer<typeof comparisonKindSchema>;

export interface ComparedExchange {
  id: number;
  tRequest: number;
  rttSeconds: number | null;
  outcome: ExchangeOutcomeName;
  status: number | null;
  statusMeaning: string | null;
  retries: number;
  /** the response's fields (tag left out) as "id=display" joined by " | " */
  answer: string | null;
}

export interface CompareRow {
  station: { address: number; name: string | null };
  call: { code: number | null; name: string | null };
  fileName: string | null;
  recordNumber: number | null;
  kind: ComparisonKindName;
  /** b's round trip minus a's */
  rttDeltaSeconds: number | null;
  a: ComparedExchange | null;
  b: ComparedExchange | null;
}

export interface CompareResult {
  a: { captureId: number; name: string };
  b: { captureId: number; name: string };
  rows: CompareRow[];
  summary: {
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
  };
}
