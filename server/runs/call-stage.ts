// The call-layer stage of a decode run: reads a decode run's frames back from SQLite in time
// order, runs the CallLayer over them with the run's field map and answer timeout (from its
// inputs snapshot), and writes exchanges, exchange ↔ frame links and recovered files tagged with
// a call run id. The same code serves the decode worker (right after the frames are written,
// before the run becomes visible) and the call-only re-run when a capture's map changes
// (call-queue.ts).
import { createHash } from 'node:crypto';
import type Database from 'better-sqlite3';
import { callLayerRoles, CallLayer, type Exchange } from '../../shared/decoder/calls/exchanges';
import type { FieldMap } from '../../shared/decoder/calls/field-map';
import { recoverFiles } from '../../shared/decoder/calls/files';
import type { LineEvent } from '../../shared/decoder/types';
import { FileResultsWriter, storeDamagedAnswers } from '../services/calls/call-results';
import type { RunInputs } from './inputs';
import { FRAME_COLUMNS, frameFromRow, type StoredFrameRow } from './stored-frame';

const PAGE = 5000;

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
}

/** Runs the call layer over a decode run's frames and writes the call run's rows (invisible until switched to). */
export async function runCallStage(db: Database.Database, input: CallStageInput): Promise<{ exchanges: number; files: number }> {
  const { links, rts } = callLayerRoles(input.inputs.capture);
  const period = input.samplePeriod;
  const frameIds = new Map<string, number>();
  const refKey = (link: string, seq: number) => `${link}\u0000${seq}`;
  const insertExchange = db.prepare(
    `insert into exchanges (run_id, capture_id, station, call_code, call_name, tag, file_name, record_number, status, status_meaning,
       request_frame_id, retry_frame_ids, response_frame_ids, t_request, t_request_end, t_response, rtt, outcome, retries, service_delay, user, answer)
     values (?, ?, ?, ?, ?, ?, ?, ?, ?, ?, ?, ?, ?, ?, ?, ?, ?, ?, ?, ?, ?, ?)`,
  );
  const insertLink = db.prepare('insert into exchange_frames (run_id, frame_id, exchange_id) values (?, ?, ?)');
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
      const exchangeId = Number(
        insertExchange.run(
          input.runId,
          input.captureId,
          e.station,
          e.callCode,
          e.callName,
          e.tag,
          e.fileName,
          e.recordNumber,
          e.status,
          e.statusMeaning,
          requestId,
          JSON.stringify(retryIds),
          JSON.stringify(responseIds),
          e.firstSample * period,
          e.answeredSendLastSample * period,
          e.responseFirstSample === null ? null : e.responseFirstSample * period,
          e.rttSeconds,
          e.outcome,
          e.retries.length,
          e.serviceDelaySeconds,
          e.requestCall.user,
          answerSignature(e),
        ).lastInsertRowid,
      );
      for (const f of [requestId, ...retryIds, ...responseIds]) if (f !== null) insertLink.run(input.runId, f, exchangeId);
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
      exchange: (e) => pending.push(e),
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
    ? (
        db
          .prepare(`select link, channel, kind, sample from line_events where job_id = ? and kind = 'rise' and channel in (${rtsChannels.map(() => '?').join(', ')}) order by sample, id`)
          .all(input.decodeJobId, ...rtsChannels) as LineEvent[]
      )
    : [];
  let nextRise = 0;
  const page = db.prepare(
    `select ${FRAME_COLUMNS} from frames where job_id = ? and (t > ? or (t = ? and id > ?)) order by t, id limit ${PAGE}`,
  );
  let lastT = -Infinity;
  let lastId = 0;
  for (;;) {
    const rows = page.all(input.decodeJobId, lastT, lastT, lastId) as StoredFrameRow[];
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

  // a file only locked (no record moved) is kept for its lock conflicts
  const files = recoverFiles(fileExchanges).filter((f) => f.recordCount > 0 || f.lockConflicts.length > 0);
  const insertFile = db.prepare(
    `insert into recovered_files (run_id, capture_id, key, name, kind, user, stations, record_count, end_known, bytes, sha256, coverage, conflicts, exchange_ids)
     values (?, ?, ?, ?, ?, ?, ?, ?, ?, ?, ?, ?, ?, ?)`,
  );
  const exId = (ref: { link: string; seq: number }) => exchangeIdOfRequest.get(refKey(ref.link, ref.seq)) ?? null;
  const results = new FileResultsWriter(db, exId);
  db.transaction(() => {
    for (const f of files) {
      const bytes = Buffer.from(f.bytes.buffer, f.bytes.byteOffset, f.bytes.length);
      const stored = insertFile.run(
        input.runId,
        input.captureId,
        f.key,
        f.name,
        f.kind,
        f.user,
        JSON.stringify(f.stations),
        f.recordCount,
        f.endKnown ? 1 : 0,
        bytes,
        createHash('sha256').update(bytes).digest('hex'),
        f.coverage.map((c) => (c === 'seen' ? 's' : c === 'missing' ? 'm' : 'c')).join(''),
        JSON.stringify(f.conflicts.map((c) => ({ record: c.record, exchangeIds: c.requests.map(exId).filter((x) => x !== null) }))),
        JSON.stringify(f.exchanges.map(exId).filter((x) => x !== null)),
      );
      results.file(Number(stored.lastInsertRowid), f);
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

