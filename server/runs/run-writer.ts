import type Database from 'better-sqlite3';
import type { DecodedFrame, LineEvent } from '../../shared/decoder';
import { bulkInsert } from '../db/bulk-insert';
import { frames, lineEvents } from '../db/schema';

// Rows of one decode run (frames, line events), written by the worker on its own connection in
// batched transactions with prepared statements. The search index is search-index.ts, the
// removal of replaced runs sweep.ts.

/** each octet as the text column shows it: printable ASCII as itself, anything else as '.' */
const PRINTABLE = Uint8Array.from({ length: 256 }, (_, b) => (b >= 32 && b < 127 ? b : 0x2e));

/** Octets of address..info: an aborted frame has no FCS; a frame too short for one keeps all it has. */
export function payloadLength(f: { bytes: Uint8Array; status: string }): number {
  const total = f.bytes.length;
  if (f.status === 'abort') return total;
  return total - 2 >= 2 ? total - 2 : total;
}

/** scratch octets for asciiOf: the string is made in one native step instead of a character at a time */
let scratch = Buffer.alloc(4096);

export function asciiOf(bytes: Uint8Array, from: number, to: number): string {
  const n = to - from;
  if (n <= 0) return '';
  if (n > scratch.length) scratch = Buffer.alloc(Math.max(n, scratch.length * 2));
  for (let i = 0; i < n; i++) scratch[i] = PRINTABLE[bytes[from + i]];
  return scratch.toString('latin1', 0, n);
}

/**
 * rows per transaction: a larger batch writes each hot index page to the WAL fewer times, but past
 * a few thousand rows the flat value array itself costs more (200 k synthetic frames through this writer:
 * 4000–8000 rows 2.8–3.1 s CPU, 20 000 rows 3.4–3.5 s, 2000 rows 3.0–3.1 s, at load ≈ 10)
 */
const BATCH = 5_000;
const ROWS_PER_INSERT = 40;
/**
 * Fill between frames shorter than this many flags is ordinary inter-frame fill: it is not
 * stored as a line event (it would double the rows of a busy capture and say nothing).
 */
export const MIN_FLAG_STRETCH = 8;

/** the frames columns the writer fills, in the table's order (bulkInsert checks it) */
const FRAME_COLUMNS = [
  'jobId', 'captureId', 'link', 'seq', 'firstSample', 'lastSample', 't', 'tEnd', 'status', 'address', 'control', 'kind', 'command',
  'ns', 'nr', 'pf', 'infoLength', 'bitLength', 'bytes', 'fcsReceived', 'fcsComputed', 'flippedBit', 'stuffed', 'hex', 'text',
] as const satisfies readonly (keyof typeof frames.$inferInsert)[];
const EVENT_COLUMNS = ['jobId', 'captureId', 'link', 'channel', 'kind', 'sample', 'endSample', 'count', 't', 'tEnd'] as const satisfies readonly (keyof typeof lineEvents.$inferInsert)[];

/**
 * Rows are kept as one flat array of driver values per table (no array per row: at a million
 * frames the garbage collector's share of the ingest was larger than SQLite's), then written in
 * one transaction per batch with a prepared ROWS_PER_INSERT-row statement.
 */
export class RunWriter {
  /** the batch's frame values, FRAME_COLUMNS per row; the array is kept across batches (no regrowth) */
  private readonly frameValues: unknown[] = new Array<unknown>(BATCH * FRAME_COLUMNS.length);
  private frameCount = 0;
  /** one statement's values, refilled for each run of the many-row insert */
  private readonly manyArgs: unknown[] = new Array<unknown>(ROWS_PER_INSERT * FRAME_COLUMNS.length);
  private eventValues: unknown[] = [];
  private readonly insertFrame: Database.Statement;
  /** one statement for ROWS_PER_INSERT rows: far fewer statement steps in the bulk insert */
  private readonly insertFrames: Database.Statement;
  private readonly insertEvent: Database.Statement;
  private readonly flushTx: { immediate: () => void };
  /** frames stored so far, as [first ordinal, its id] per flush: ids are consecutive within one flush */
  private readonly idRuns: number[] = [];
  private stored = 0;
  /** the first and last frame id of the run (0 before the first flush) */
  firstId = 0;
  lastId = 0;
  /**
   * Called inside each flush's transaction once its frames have ids (the in-stream call stage
   * writes the exchanges over them there, so they need no commit of their own).
   */
  afterFlush: (() => void) | null = null;
  frames = 0;
  events = 0;
  /** milliseconds spent in batched inserts (the ingest benchmark splits the time by phase) */
  insertMs = 0;
  lastSample = 0;

  constructor(
    private readonly db: Database.Database,
    private readonly jobId: number,
    private readonly captureId: number,
    private readonly period: () => number,
  ) {
    this.insertFrame = bulkInsert(db, frames, FRAME_COLUMNS, 1);
    this.insertFrames = bulkInsert(db, frames, FRAME_COLUMNS, ROWS_PER_INSERT);
    this.insertEvent = bulkInsert(db, lineEvents, EVENT_COLUMNS, 1);
    this.flushTx = db.transaction(() => {
      const v = this.frameValues;
      const n = FRAME_COLUMNS.length;
      const count = this.frameCount;
      const filled = count * n;
      const many = n * ROWS_PER_INSERT;
      const args = this.manyArgs;
      let i = 0;
      let last = 0;
      for (; i + many <= filled; i += many) {
        for (let j = 0; j < many; j++) args[j] = v[i + j];
        last = Number(this.insertFrames.run(args).lastInsertRowid);
      }
      for (; i < filled; i += n) last = Number(this.insertFrame.run(v.slice(i, i + n)).lastInsertRowid);
      if (count > 0) {
        // one writer holds the lock for the whole transaction, so the rows' ids are consecutive
        const first = last - count + 1;
        this.idRuns.push(this.stored, first);
        this.stored += count;
        if (this.firstId === 0) this.firstId = first;
        this.lastId = last;
      }
      const e = this.eventValues;
      for (let j = 0; j < e.length; j += EVENT_COLUMNS.length) this.insertEvent.run(e.slice(j, j + EVENT_COLUMNS.length));
      // the values stay until overwritten; only the count says what the next batch holds
      this.frameCount = 0;
      this.eventValues = [];
      this.afterFlush?.();
    });
  }

  /** The id of the run's frame number `ordinal` (0-based, in the order given to frame()); it must be flushed. */
  idOf(ordinal: number): number {
    const runs = this.idRuns;
    if (ordinal < 0 || ordinal >= this.stored) throw new Error(`frame ${ordinal} of the run is not stored yet`);
    // binary search for the last flush that starts at or before the ordinal
    let lo = 0;
    let hi = runs.length / 2 - 1;
    while (lo < hi) {
      const mid = (lo + hi + 1) >> 1;
      if (runs[mid * 2] <= ordinal) lo = mid;
      else hi = mid - 1;
    }
    return runs[lo * 2 + 1] + (ordinal - runs[lo * 2]);
  }

  frame(f: DecodedFrame): void {
    const p = this.period();
    const d = f.decode;
    const payload = payloadLength(f);
    const infoFrom = d ? d.infoOffset : payload;
    const infoTo = d ? Math.min(payload, d.infoOffset + d.infoLength) : payload;
    const buf = Buffer.isBuffer(f.bytes) ? f.bytes : Buffer.from(f.bytes.buffer, f.bytes.byteOffset, f.bytes.length);
    // FRAME_COLUMNS' order
    const v = this.frameValues;
    let k = this.frameCount * FRAME_COLUMNS.length;
    v[k++] = this.jobId;
    v[k++] = this.captureId;
    v[k++] = f.link;
    v[k++] = f.seq;
    v[k++] = f.firstSample;
    v[k++] = f.lastSample;
    v[k++] = f.firstSample * p;
    v[k++] = f.lastSample * p;
    v[k++] = f.status;
    v[k++] = d ? d.address : null;
    v[k++] = d ? d.control : null;
    v[k++] = d ? d.kind : null;
    v[k++] = d ? d.command : null;
    v[k++] = d ? d.ns : null;
    v[k++] = d ? d.nr : null;
    v[k++] = d ? (d.pf ? 1 : 0) : null;
    v[k++] = d ? d.infoLength : 0;
    v[k++] = f.bitLength;
    // the decoder's octets are the frame's own copy, and the driver copies what it binds
    v[k++] = buf;
    v[k++] = f.fcsReceived;
    v[k++] = f.fcsComputed;
    v[k++] = f.flippedBit;
    v[k++] = f.stuffed.length === 0 ? '[]' : JSON.stringify(f.stuffed);
    v[k++] = buf.toString('hex', 0, payload);
    v[k] = asciiOf(f.bytes, infoFrom, infoTo);
    this.frameCount++;
    this.frames++;
    if (f.lastSample > this.lastSample) this.lastSample = f.lastSample;
    if (this.frameCount >= BATCH) this.flush();
  }

  event(e: LineEvent): void {
    if (e.kind === 'flags' && (e.count ?? 0) < MIN_FLAG_STRETCH) return;
    const p = this.period();
    // EVENT_COLUMNS' order
    this.eventValues.push(
      this.jobId,
      this.captureId,
      e.link,
      e.channel,
      e.kind,
      e.sample,
      e.endSample ?? null,
      e.count ?? null,
      e.sample * p,
      e.endSample !== undefined ? e.endSample * p : null,
    );
    this.events++;
    const end = e.endSample ?? e.sample;
    if (end > this.lastSample) this.lastSample = end;
    if (this.eventValues.length >= BATCH * EVENT_COLUMNS.length) this.flush();
  }

  flush(): void {
    if (this.frameCount === 0 && this.eventValues.length === 0) return;
    const t = performance.now();
    this.flushTx.immediate();
    this.insertMs += performance.now() - t;
  }
}
