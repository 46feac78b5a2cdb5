import type Database from 'better-sqlite3';
import type { DecodedFrame, LineEvent } from '../../shared/decoder/types';

// Rows of one decode run (frames, line events), written by the worker on its own connection in
// batched transactions with prepared statements. The search index is search-index.ts, the
// removal of replaced runs sweep.ts.

const PRINTABLE = Array.from({ length: 256 }, (_, b) => (b >= 32 && b < 127 ? String.fromCharCode(b) : '.'));

/** Octets of address..info: an aborted frame has no FCS; a frame too short for one keeps all it has. */
export function payloadLength(f: { bytes: Uint8Array; status: string }): number {
  const total = f.bytes.length;
  if (f.status === 'abort') return total;
  return total - 2 >= 2 ? total - 2 : total;
}

export function asciiOf(bytes: Uint8Array, from: number, to: number): string {
  let s = '';
  for (let i = from; i < to; i++) s += PRINTABLE[bytes[i]];
  return s;
}

const BATCH = 10_000;
const ROWS_PER_INSERT = 40;
const FRAME_PARAMS = Array.from({ length: 25 }, () => '?').join(', ');
/**
 * Fill between frames shorter than this many flags is ordinary inter-frame fill: it is not
 * stored as a line event (it would double the rows of a busy capture and say nothing).
 */
export const MIN_FLAG_STRETCH = 8;

export class RunWriter {
  private frameRows: unknown[][] = [];
  private eventRows: unknown[][] = [];
  private readonly insertFrame: Database.Statement;
  /** one statement for ROWS_PER_INSERT rows: far fewer statement steps in the bulk insert */
  private readonly insertFrames: Database.Statement;
  private readonly insertEvent: Database.Statement;
  private readonly flushTx: { immediate: () => void };
  frames = 0;
  events = 0;
  lastSample = 0;

  constructor(
    private readonly db: Database.Database,
    private readonly jobId: number,
    private readonly captureId: number,
    private readonly period: () => number,
  ) {
    const frameInsert = (rows: number) =>
      db.prepare(
        `insert into frames (job_id, capture_id, link, seq, first_sample, last_sample, t, t_end, status, address, control, kind, command,
          ns, nr, pf, info_length, bit_length, bytes, fcs_received, fcs_computed, flipped_bit, stuffed, hex, text)
         values ${Array.from({ length: rows }, () => `(${FRAME_PARAMS})`).join(', ')}`,
      );
    this.insertFrame = frameInsert(1);
    this.insertFrames = frameInsert(ROWS_PER_INSERT);
    this.insertEvent = db.prepare(
      'insert into line_events (job_id, capture_id, link, channel, kind, sample, end_sample, count, t, t_end) values (?, ?, ?, ?, ?, ?, ?, ?, ?, ?)',
    );
    this.flushTx = db.transaction(() => {
      const rows = this.frameRows;
      let i = 0;
      for (; i + ROWS_PER_INSERT <= rows.length; i += ROWS_PER_INSERT) this.insertFrames.run(rows.slice(i, i + ROWS_PER_INSERT).flat());
      for (; i < rows.length; i++) this.insertFrame.run(rows[i]);
      for (const r of this.eventRows) this.insertEvent.run(r);
      this.frameRows = [];
      this.eventRows = [];
    });
  }

  frame(f: DecodedFrame): void {
    const p = this.period();
    const d = f.decode;
    const payload = payloadLength(f);
    const infoFrom = d ? d.infoOffset : payload;
    const infoTo = d ? Math.min(payload, d.infoOffset + d.infoLength) : payload;
    const buf = Buffer.from(f.bytes.buffer, f.bytes.byteOffset, f.bytes.length);
    this.frameRows.push([
      this.jobId,
      this.captureId,
      f.link,
      f.seq,
      f.firstSample,
      f.lastSample,
      f.firstSample * p,
      f.lastSample * p,
      f.status,
      d ? d.address : null,
      d ? d.control : null,
      d ? d.kind : null,
      d ? d.command : null,
      d ? d.ns : null,
      d ? d.nr : null,
      d ? (d.pf ? 1 : 0) : null,
      d ? d.infoLength : 0,
      f.bitLength,
      Buffer.from(buf),
      f.fcsReceived,
      f.fcsComputed,
      f.flippedBit,
      JSON.stringify(f.stuffed),
      buf.toString('hex', 0, payload),
      asciiOf(f.bytes, infoFrom, infoTo),
    ]);
    this.frames++;
    if (f.lastSample > this.lastSample) this.lastSample = f.lastSample;
    if (this.frameRows.length >= BATCH) this.flush();
  }

  event(e: LineEvent): void {
    if (e.kind === 'flags' && (e.count ?? 0) < MIN_FLAG_STRETCH) return;
    const p = this.period();
    this.eventRows.push([
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
    ]);
    this.events++;
    const end = e.endSample ?? e.sample;
    if (end > this.lastSample) this.lastSample = end;
    if (this.eventRows.length >= BATCH) this.flush();
  }

  flush(): void {
    if (this.frameRows.length > 0 || this.eventRows.length > 0) this.flushTx.immediate();
  }
}
