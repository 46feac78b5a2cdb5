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
import type { LineEvent } from '../../shared/decoder';
import { FileResultsWriter, storeDamagedAnswers } from '../services/calls/call-results';
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

/** Runs the call layer over a decode run's frames and writes the call run's rows (invisible until switched to). */
export async function runCallStage(db: Database.Database, input: CallStageInput): Promise<{ exchanges: number; files: number }> {
  const { links, rts } = callLayerRoles(input.inputs.capture);
  const period = input.samplePeriod;
  const frameIds = new Map<string, number>();
  const refKey = (link: string, seq: number) => `${link}\u0000${seq}`;
  const d = drizzle(db, { schema });
  const insertExchange = d.insert(exchanges).values(placeholders(exchanges)).returning({ id: exchanges.id }).prepare();
  const insertLink = d.insert(exchangeFrames).values(placeholders(exchangeFrames)).prepare();
  // exchanges about files keep what recoverFiles needs (record data), the rest only their row
  const fileExchanges: Exchange[] = [];
  const exchangeIdOfRequest = new Map<string, number>();
  let pending: Exchange[] = [];
  let count = 0;
  const writePending = db.transaction(() => {
    for (const e of pending) {
      const id = (ref: { link: string; seq: number }) => frameIds.get(refKey(ref.link, ref.seq)) ?? null;
      const requestId = id(e.request);
      const retryIds = e.retries.map(id).filter((x): x is number => x !== null);
      const responseIds = e.responses.map(id).filter((x): x is number => x !== null);
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
        // filled in below and by the file results writer (server/services/calls/call-results.ts)
        damagedResponseFrameIds: '[]',
        lockConflicts: '[]',
      };
      const exchangeId = insertExchange.get(row)!.id;
      for (const f of [requestId, ...retryIds, ...responseIds]) if (f !== null) insertLink.run({ runId: input.runId, frameId: f, exchangeId });
      storeDamagedAnswers(db, input.runId, exchangeId, e.damagedResponses.map(id).filter((x): x is number => x !== null));
      if (e.fileName) {
        exchangeIdOfRequest.set(refKey(e.request.link, e.request.seq), exchangeId);
        fileExchanges.push(slim(e));
      }
      count++;
    }
    pending = [];
  });
  const layer = new CallLayer(
    { map: input.map, links, rts, samplePeriodSeconds: period, timeoutSeconds: input.inputs.answerTimeoutSeconds },
    {
      exchange: (e) => {
        pending.push(e);
        input.onExchange?.(e);
      },
      call: (cf) => {
        // damaged I frames too: an exchange lists its damaged answers by frame id
        if (cf.call || cf.damagedCall !== undefined) frameIds.set(refKey(cf.ref.link, cf.ref.seq), currentFrameId);
      },
    },
  );
  let currentFrameId = 0;
  // RTS rises are few: read them first, then merge them into the frame pages by sample
  const rtsChannels = rts.map((r) => r.channel);
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
      while (nextRise < rises.length && rises[nextRise].sample <= r.firstSample) layer.event(rises[nextRise++]);
      currentFrameId = r.id;
      layer.frame(frameFromRow(r));
    }
    const last = rows[rows.length - 1];
    lastT = last.t;
    lastId = last.id;
    if (pending.length) writePending.immediate();
    if (input.pause) await input.pause();
  }
  while (nextRise < rises.length) layer.event(rises[nextRise++]);
  layer.finish();
  if (pending.length) writePending.immediate();

  // the map's own file calls; a file only locked (no record moved) is kept for its lock conflicts
  const files = recoverFiles(fileExchanges, fileCallsOf(input.map)).filter((f) => f.recordCount > 0 || f.lockConflicts.length > 0);
  const insertFile = d.insert(recoveredFiles).values(placeholders(recoveredFiles)).returning({ id: recoveredFiles.id }).prepare();
  const exId = (ref: { link: string; seq: number }) => exchangeIdOfRequest.get(refKey(ref.link, ref.seq)) ?? null;
  const results = new FileResultsWriter(db, exId);
  db.transaction(() => {
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
  return { exchanges: count, files: files.length };
}

/** What recoverFiles reads of an exchange: the call decodes without their field lists. */
function slim(e: Exchange): Exchange {
  return {
    ...e,
    requestCall: { ...e.requestCall, fields: [] },
    responseCall: e.responseCall ? { ...e.responseCall, fields: [] } : null,
  };
}

