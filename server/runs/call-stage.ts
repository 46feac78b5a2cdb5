// The call-layer stage of a decode run: reads a decode run's frames back from SQLite in time
// order, runs the CallLayer over them with the run's field map and answer timeout (from its
// inputs snapshot), and writes exchanges, exchange ↔ frame links and recovered files tagged with
// a call run id. The same code serves the decode worker (right after the frames are written,
// before the run becomes visible) and the call-only re-run when a capture's map changes
// (call-queue.ts).
import { createHash } from 'node:crypto';
import type Database from 'better-sqlite3';
import { callLayerRoles, CallLayer, type Exchange } from '../../shared/decoder/calls';
import type { FieldMap } from '../../shared/decoder/calls';
import { fileCallsOf, recoverFiles } from '../../shared/decoder/calls';
import type { DecodedFrame, LineEvent } from '../../shared/decoder';
import type { CallLayerFrame } from '../../shared/decoder/calls';
import { FileResultsWriter, storeDamagedAnswers } from './call-results-writer';
import type { RunInputs } from './inputs';
import { drizzle } from 'drizzle-orm/better-sqlite3';
import { and, eq, inArray } from 'drizzle-orm';
import { placeholders, type FullRow } from '../db/placeholders';
import * as schema from '../db/schema';
import { exchangeFrames, exchanges, lineEvents, recoveredFiles } from '../db/schema';
import { frameFromRow, storedFramePages } from './stored-frame';

const PAGE = 5000;
type ExchangeInsert = FullRow<typeof exchanges>;

/** The response's fields without the tag: what "answered the same" compares. */
export function answerSignature(e: Exchange): string | null {
  const r = e.responseCall;
  if (!r) return null;
  return r.fields
    .filter((f) => f.role !== 'tag')
    .map((f) => `${f.id}=${f.display}`)
    .join(' | ');
}

export interface CallStageInput {
  captureId: number;
  decodeJobId: number;
  runId: number;
  map: FieldMap;
  inputs: RunInputs;
  samplePeriod: number;
  /** called between pages of frames; the in-process re-run yields to requests here */
  pause?: () => Promise<void>;
  /** each exchange as the call layer pairs it (the decode run's fault desk takes them) */
  onExchange?: (e: Exchange) => void;
}

/**
 * The call layer of one call run and its writer. Frames come either from the stored run
 * (runCallStage) or straight from the decoder (InStreamCalls); a frame is named by a number
 * that `idOf` turns into its frames.id when the exchanges over it are written.
 */
class CallStageWriter {
  readonly layer: CallLayer;
  private readonly d;
  private readonly insertExchange;
  private readonly insertLink;
  /** call frames by link and seq (a number key: link index × 2^32 + seq) → frame number */
  private readonly frameRefs = new Map<number, number>();
  private readonly linkIndex = new Map<string, number>();
  // exchanges about files keep what recoverFiles needs (record data), the rest only their row
  private readonly fileExchanges: Exchange[] = [];
  private readonly exchangeIdOfRequest = new Map<number, number>();
  private pending: Exchange[] = [];
  private currentRef = 0;
  count = 0;

  constructor(
    private readonly db: Database.Database,
    private readonly input: Omit<CallStageInput, 'decodeJobId' | 'pause'>,
  ) {
    const { links, rts } = callLayerRoles(input.inputs.capture);
    this.d = drizzle(db, { schema });
    this.insertExchange = this.d.insert(exchanges).values(placeholders(exchanges)).returning({ id: exchanges.id }).prepare();
    this.insertLink = this.d.insert(exchangeFrames).values(placeholders(exchangeFrames)).prepare();
    this.layer = new CallLayer(
      { map: input.map, links, rts, samplePeriodSeconds: input.samplePeriod, timeoutSeconds: input.inputs.answerTimeoutSeconds },
      {
        exchange: (e) => {
          this.pending.push(e);
          input.onExchange?.(e);
        },
        call: (cf) => {
          // damaged I frames too: an exchange lists its damaged answers by frame id
          if (cf.call || cf.damagedCall !== undefined) this.frameRefs.set(this.key(cf.ref.link, cf.ref.seq), this.currentRef);
        },
      },
    );
  }

  private key(link: string, seq: number): number {
    let i = this.linkIndex.get(link);
    if (i === undefined) this.linkIndex.set(link, (i = this.linkIndex.size));
    return i * 2 ** 32 + seq;
  }

  frame(f: CallLayerFrame, ref: number): void {
    this.currentRef = ref;
    this.layer.frame(f);
  }

  get hasPending(): boolean {
    return this.pending.length > 0;
  }

  /** Writes the exchanges paired so far (their frames are stored); nests inside a caller's transaction. */
  writePending(idOf: (ref: number) => number): void {
    if (this.pending.length === 0) return;
    const input = this.input;
    this.db.transaction(() => {
      for (const e of this.pending) {
        const id = (r: { link: string; seq: number }) => {
          const ref = this.frameRefs.get(this.key(r.link, r.seq));
          return ref === undefined ? null : idOf(ref);
        };
        const requestId = id(e.request);
        const retryIds = e.retries.map(id).filter((x): x is number => x !== null);
        const responseIds = e.responses.map(id).filter((x): x is number => x !== null);
        const period = input.samplePeriod;
        const row: ExchangeInsert = {
          runId: input.runId,
          captureId: input.captureId,
          station: e.station,
          callCode: e.callCode,
          callName: e.callName,
          tag: e.tag,
          fileName: e.fileName,
          recordNumber: e.recordNumber,
          status: e.status,
          statusMeaning: e.statusMeaning,
          requestFrameId: requestId,
          retryFrameIds: JSON.stringify(retryIds),
          responseFrameIds: JSON.stringify(responseIds),
          tRequest: e.firstSample * period,
          tRequestEnd: e.answeredSendLastSample * period,
          tResponse: e.responseFirstSample === null ? null : e.responseFirstSample * period,
          rtt: e.rttSeconds,
          outcome: e.outcome,
          retries: e.retries.length,
          serviceDelay: e.serviceDelaySeconds,
          user: e.requestCall.user,
          answer: answerSignature(e),
          // filled in below and by the file results writer (server/runs/call-results-writer.ts)
          damagedResponseFrameIds: '[]',
          lockConflicts: '[]',
        };
        const exchangeId = this.insertExchange.get(row)!.id;
        for (const f of [requestId, ...retryIds, ...responseIds]) if (f !== null) this.insertLink.run({ runId: input.runId, frameId: f, exchangeId });
        storeDamagedAnswers(this.db, input.runId, exchangeId, e.damagedResponses.map(id).filter((x): x is number => x !== null));
        if (e.fileName) {
          this.exchangeIdOfRequest.set(this.key(e.request.link, e.request.seq), exchangeId);
          this.fileExchanges.push(slim(e));
        }
        this.count++;
      }
      this.pending = [];
    }).immediate();
  }

  /** Ends the layer, writes what is left and the recovered files. */
  finish(idOf: (ref: number) => number): { exchanges: number; files: number } {
    this.layer.finish();
    this.writePending(idOf);
    const input = this.input;
    // the map's own file calls; a file only locked (no record moved) is kept for its lock conflicts
    const files = recoverFiles(this.fileExchanges, fileCallsOf(input.map)).filter((f) => f.recordCount > 0 || f.lockConflicts.length > 0);
    const insertFile = this.d.insert(recoveredFiles).values(placeholders(recoveredFiles)).returning({ id: recoveredFiles.id }).prepare();
    const exId = (ref: { link: string; seq: number }) => this.exchangeIdOfRequest.get(this.key(ref.link, ref.seq)) ?? null;
    const results = new FileResultsWriter(this.db, exId);
    this.db.transaction(() => {
      for (const f of files) {
        const bytes = Buffer.from(f.bytes.buffer, f.bytes.byteOffset, f.bytes.length);
        const stored = insertFile.get({
          runId: input.runId,
          captureId: input.captureId,
          key: f.key,
          name: f.name,
          kind: f.kind,
          user: f.user,
          stations: JSON.stringify(f.stations),
          recordCount: f.recordCount,
          endKnown: f.endKnown,
          bytes,
          sha256: createHash('sha256').update(bytes).digest('hex'),
          coverage: f.coverage.map((c) => (c === 'seen' ? 's' : c === 'missing' ? 'm' : 'c')).join(''),
          conflicts: JSON.stringify(f.conflicts.map((c) => ({ record: c.record, exchangeIds: c.requests.map(exId).filter((x) => x !== null) }))),
          exchangeIds: JSON.stringify(f.exchanges.map(exId).filter((x) => x !== null)),
          // the file results writer sets these once every exchange has its id
          sizeSource: null,
          sizeExchangeId: null,
          lockConflicts: null,
        } satisfies FullRow<typeof recoveredFiles>)!;
        results.file(stored.id, f);
      }
      results.finish();
    }).immediate();
    return { exchanges: this.count, files: files.length };
  }
}

/** Runs the call layer over a decode run's stored frames and writes the call run's rows (invisible until switched to). */
export async function runCallStage(db: Database.Database, input: CallStageInput): Promise<{ exchanges: number; files: number }> {
  const stage = new CallStageWriter(db, input);
  const d = drizzle(db, { schema });
  const sameId = (id: number) => id;
  // RTS rises are few: read them first, then merge them into the frame pages by sample
  const rtsChannels = callLayerRoles(input.inputs.capture).rts.map((r) => r.channel);
  const rises: LineEvent[] = rtsChannels.length
    ? d
        .select({ link: lineEvents.link, channel: lineEvents.channel, kind: lineEvents.kind, sample: lineEvents.sample })
        .from(lineEvents)
        .where(and(eq(lineEvents.jobId, input.decodeJobId), eq(lineEvents.kind, 'rise'), inArray(lineEvents.channel, rtsChannels)))
        .orderBy(lineEvents.sample, lineEvents.id)
        .all()
    : [];
  let nextRise = 0;
  const page = storedFramePages(d, PAGE);
  let lastT = -Infinity;
  let lastId = 0;
  for (;;) {
    const rows = page.all({ jobId: input.decodeJobId, t: lastT, id: lastId });
    if (rows.length === 0) break;
    for (const r of rows) {
      while (nextRise < rises.length && rises[nextRise].sample <= r.firstSample) stage.layer.event(rises[nextRise++]);
      stage.frame(frameFromRow(r), r.id);
    }
    const last = rows[rows.length - 1];
    lastT = last.t;
    lastId = last.id;
    stage.writePending(sameId);
    if (input.pause) await input.pause();
  }
  while (nextRise < rises.length) stage.layer.event(rises[nextRise++]);
  return stage.finish(sameId);
}

/**
 * The call layer fed by the decode worker as the decoder lets frames out, instead of reading
 * the run back afterwards: it sees exactly what runCallStage would read (frames rebuilt as
 * stored, RTS rises merged by sample, a rise at a frame's first sample before it), and writes
 * exchanges inside the row writer's flushes, which assign the frame ids. The decoder lets frames
 * out in time order; if that ever fails (its reorder buffer overflows), `broken` is set and the
 * caller runs runCallStage over the stored run instead.
 */
export class InStreamCalls {
  private readonly stage: CallStageWriter;
  private readonly rtsChannels: Set<string>;
  private held: { frame: CallLayerFrame; ref: number } | null = null;
  private lastFedSample = -Infinity;
  private lastT = -Infinity;
  broken = false;
  /** an exception from the call layer: the call run fails with it, the decode goes on */
  failure: unknown = null;
  /** exchanges for the fault desk, handed over only if this run's result is kept */
  readonly exchanges: Exchange[] = [];

  constructor(
    db: Database.Database,
    input: Omit<CallStageInput, 'decodeJobId' | 'pause' | 'onExchange'>,
    private readonly idOf: (ordinal: number) => number,
  ) {
    this.stage = new CallStageWriter(db, { ...input, onExchange: (e) => this.exchanges.push(e) });
    this.rtsChannels = new Set(callLayerRoles(input.inputs.capture).rts.map((r) => r.channel));
  }

  private get off(): boolean {
    return this.broken || this.failure !== null;
  }

  /** the run's frame number `ordinal` (0-based, as the row writer counts) stored at time t */
  frame(f: DecodedFrame, ordinal: number, t: number): void {
    if (this.off) return;
    // runCallStage reads in (t, id) order, ids in arrival order
    if (t < this.lastT) {
      this.broken = true;
      return;
    }
    this.lastT = t;
    try {
      this.feedHeld();
      this.held = { frame: asStored(f), ref: ordinal };
    } catch (err) {
      this.failure = err;
    }
  }

  event(e: LineEvent): void {
    if (this.off || e.kind !== 'rise' || !this.rtsChannels.has(e.channel)) return;
    // runCallStage puts a rise before every frame starting at or after its sample
    if (e.sample <= this.lastFedSample) {
      this.broken = true;
      return;
    }
    try {
      if (this.held && this.held.frame.firstSample < e.sample) this.feedHeld();
      this.stage.layer.event(e);
    } catch (err) {
      this.failure = err;
    }
  }

  private feedHeld(): void {
    const h = this.held;
    if (!h) return;
    this.held = null;
    this.lastFedSample = h.frame.firstSample;
    this.stage.frame(h.frame, h.ref);
  }

  /** inside the row writer's flush: the frames given so far have ids now */
  afterFlush(): void {
    if (this.off || !this.stage.hasPending) return;
    try {
      this.stage.writePending(this.idOf);
    } catch (err) {
      this.failure = err;
    }
  }

  /** the last frame through the layer, then the rest of the rows; all frames must be flushed */
  finish(): { exchanges: number; files: number } {
    this.feedHeld();
    return this.stage.finish(this.idOf);
  }
}

/** A decoded frame as the call layer reads it back from its stored row (stored-frame.ts). */
function asStored(f: DecodedFrame): CallLayerFrame {
  const d = f.decode;
  return frameFromRow({
    id: 0,
    link: f.link,
    seq: f.seq,
    firstSample: f.firstSample,
    lastSample: f.lastSample,
    t: 0,
    status: f.status,
    address: d ? d.address : null,
    control: d ? d.control : null,
    kind: d ? d.kind : null,
    command: d ? d.command : null,
    ns: d ? d.ns : null,
    nr: d ? d.nr : null,
    pf: d ? d.pf : null,
    infoLength: d ? d.infoLength : 0,
    bytes: Buffer.from(f.bytes.buffer, f.bytes.byteOffset, f.bytes.length),
  });
}

/** Removes what a call run wrote so far (an in-stream run given up for a re-read). */
export function dropCallRows(db: Database.Database, runId: number): void {
  const d = drizzle(db, { schema });
  db.transaction(() => {
    d.delete(exchangeFrames).where(eq(exchangeFrames.runId, runId)).run();
    d.delete(exchanges).where(eq(exchanges.runId, runId)).run();
    d.delete(recoveredFiles).where(eq(recoveredFiles.runId, runId)).run();
  }).immediate();
}

/** What recoverFiles reads of an exchange: the call decodes without their field lists. */
function slim(e: Exchange): Exchange {
  return {
    ...e,
    requestCall: { ...e.requestCall, fields: [] },
    responseCall: e.responseCall ? { ...e.responseCall, fields: [] } : null,
  };
}

