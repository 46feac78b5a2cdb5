// The call-layer stage of a decode run: reads a decode run's frames back from SQLite in time
// order, runs the CallLayer over them with the capture's field map, and writes exchanges,
// exchange ↔ frame links and recovered files tagged with a call run id. The same code serves the
// decode worker (right after the frames are written, before the run becomes visible) and the
// call-only re-run when a capture's map changes (server/services/calls/call-runs.ts).
// Raw better-sqlite3 throughout: the worker has no Drizzle handle.
import { createHash } from 'node:crypto';
import type Database from 'better-sqlite3';
import { callLayerRoles, CallLayer, type Exchange } from '../../shared/decoder/calls/exchanges';
import { CPM_ENVELOPE_DOCUMENT } from '../../shared/decoder/calls/cpm-envelope';
import { parseFieldMap, type FieldMap } from '../../shared/decoder/calls/field-map';
import { recoverFiles } from '../../shared/decoder/calls/files';
import type { DecodedFrame, FrameStatus, LineEvent } from '../../shared/decoder/types';
import type { CaptureSettings } from '../../shared/schemas';
import { payloadLength } from './run-rows';

export const BUILT_IN_MAP_NAME = 'CP/M call envelope';
const PAGE = 5000;

/**
 * The rig's built-in map row, created on first use; when the shipped document changed since,
 * the new one becomes the next version (older versions stay, captures pinned to them keep them).
 */
export function ensureBuiltInMap(db: Database.Database, rigId: number): number {
  const doc = JSON.stringify(CPM_ENVELOPE_DOCUMENT);
  // the usual case reads only; a write takes the lock first (IMMEDIATE), so the server and a
  // decode worker creating the row at the same moment wait for each other instead of failing
  const existing = db
    .prepare(
      `select f.id from field_maps f join field_map_versions v on v.map_id = f.id and v.version = f.latest_version
       where f.rig_id = ? and f.built_in = 1 and v.document = ? order by f.id limit 1`,
    )
    .pluck()
    .get(rigId, doc) as number | undefined;
  if (existing !== undefined) return existing;
  return db.transaction(() => {
    const row = db.prepare('select id, latest_version as v from field_maps where rig_id = ? and built_in = 1 order by id limit 1').get(rigId) as
      | { id: number; v: number }
      | undefined;
    const now = Date.now();
    if (!row) {
      const id = Number(
        db
          .prepare('insert into field_maps (rig_id, name, built_in, latest_version, created_at, updated_at) values (?, ?, 1, 1, ?, ?)')
          .run(rigId, BUILT_IN_MAP_NAME, now, now).lastInsertRowid,
      );
      db.prepare('insert into field_map_versions (map_id, version, document, created_by, created_at) values (?, 1, ?, null, ?)').run(id, doc, now);
      return id;
    }
    const latest = db.prepare('select document from field_map_versions where map_id = ? and version = ?').pluck().get(row.id, row.v) as string | undefined;
    if (latest !== doc) {
      db.prepare('insert into field_map_versions (map_id, version, document, created_by, created_at) values (?, ?, ?, null, ?)').run(row.id, row.v + 1, doc, now);
      db.prepare('update field_maps set latest_version = ?, updated_at = ? where id = ?').run(row.v + 1, now, row.id);
    }
    return row.id;
  }).immediate();
}

export interface ResolvedMap {
  mapId: number;
  version: number;
  map: FieldMap;
}

/** A stored map version, parsed; the version pinned by the capture or else the latest. */
export function loadMapVersion(db: Database.Database, mapId: number, version: number | null): ResolvedMap {
  const v = version ?? (db.prepare('select latest_version from field_maps where id = ?').pluck().get(mapId) as number | undefined);
  if (v === undefined) throw new Error(`field map ${mapId} no longer exists`);
  const doc = db.prepare('select document from field_map_versions where map_id = ? and version = ?').pluck().get(mapId, v) as string | undefined;
  if (doc === undefined) throw new Error(`field map ${mapId} has no version ${v}`);
  return { mapId, version: v, map: parseFieldMap(JSON.parse(doc)) };
}

/** The capture's chosen map (the rig's built-in when none was chosen or the chosen one is gone). */
export function chosenMap(db: Database.Database, captureId: number): ResolvedMap {
  const choice = db.prepare('select map_id as mapId, map_version as mapVersion from capture_call_layers where capture_id = ?').get(captureId) as
    | { mapId: number | null; mapVersion: number | null }
    | undefined;
  if (choice?.mapId != null) {
    const exists = db.prepare('select 1 from field_maps where id = ?').get(choice.mapId);
    if (exists) return loadMapVersion(db, choice.mapId, choice.mapVersion);
  }
  const rigId = db.prepare('select rig_id from captures where id = ?').pluck().get(captureId) as number;
  return loadMapVersion(db, ensureBuiltInMap(db, rigId), null);
}

export function createCallRun(db: Database.Database, captureId: number, decodeJobId: number, m: ResolvedMap, state: 'queued' | 'running'): number {
  return Number(
    db
      .prepare('insert into call_runs (capture_id, decode_job_id, map_id, map_version, state, created_at) values (?, ?, ?, ?, ?, ?)')
      .run(captureId, decodeJobId, m.mapId, m.version, state, Date.now()).lastInsertRowid,
  );
}

interface FrameRow {
  id: number;
  link: string;
  seq: number;
  firstSample: number;
  lastSample: number;
  t: number;
  status: FrameStatus;
  address: number | null;
  control: number | null;
  kind: 'I' | 'S' | 'U' | null;
  command: string | null;
  ns: number | null;
  nr: number | null;
  pf: number | null;
  infoLength: number;
  bytes: Buffer;
}

/** A stored frame as the call layer reads it (the link decode rebuilt from its columns). */
export function frameFromRow(r: FrameRow): DecodedFrame {
  const bytes = new Uint8Array(r.bytes.buffer, r.bytes.byteOffset, r.bytes.length);
  const payload = payloadLength({ bytes, status: r.status });
  return {
    link: r.link,
    seq: r.seq,
    firstSample: r.firstSample,
    lastSample: r.lastSample,
    status: r.status,
    bytes,
    decode:
      r.kind === null || r.address === null || r.control === null
        ? null
        : {
            address: r.address,
            control: r.control,
            kind: r.kind,
            command: r.command ?? '?',
            ns: r.ns,
            nr: r.nr,
            pf: r.pf === 1,
            infoOffset: Math.max(0, payload - r.infoLength),
            infoLength: r.infoLength,
          },
  } as unknown as DecodedFrame;
}

export const FRAME_COLUMNS = `id, link, seq, first_sample as firstSample, last_sample as lastSample, t, status, address, control, kind, command, ns, nr, pf,
  info_length as infoLength, bytes`;

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
  settings: CaptureSettings;
  samplePeriod: number;
  timeoutSeconds?: number;
  /** each exchange as the call layer pairs it (the decode run's fault desk takes them) */
  onExchange?: (e: Exchange) => void;
  /** called between pages of frames; the in-process re-run yields to requests here */
  pause?: () => Promise<void>;
}

/** The capture's rig decides how long a request may wait before it counts as unanswered. */
export function rigResponseTimeoutSeconds(db: Database.Database, captureId: number): number | undefined {
  const ms = db
    .prepare('select r.response_timeout_ms from captures c join rigs r on r.id = c.rig_id where c.id = ?')
    .pluck()
    .get(captureId) as number | undefined;
  return ms === undefined ? undefined : ms / 1000;
}

/** Runs the call layer over a decode run's frames and writes the call run's rows (invisible until switched to). */
export async function runCallStage(db: Database.Database, input: CallStageInput): Promise<{ exchanges: number; files: number }> {
  const { links, rts } = callLayerRoles(input.settings);
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
      if (e.fileName) {
        exchangeIdOfRequest.set(refKey(e.request.link, e.request.seq), exchangeId);
        fileExchanges.push(slim(e));
      }
      count++;
    }
    pending = [];
  });
  const layer = new CallLayer(
    { map: input.map, links, rts, samplePeriodSeconds: period, timeoutSeconds: input.timeoutSeconds ?? rigResponseTimeoutSeconds(db, input.captureId) },
    {
      exchange: (e) => {
        pending.push(e);
        input.onExchange?.(e);
      },
      call: (cf) => {
        if (cf.call) frameIds.set(refKey(cf.ref.link, cf.ref.seq), currentFrameId);
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
    const rows = page.all(input.decodeJobId, lastT, lastT, lastId) as FrameRow[];
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

  const files = recoverFiles(fileExchanges).filter((f) => f.recordCount > 0);
  const insertFile = db.prepare(
    `insert into recovered_files (run_id, capture_id, key, name, kind, user, stations, record_count, end_known, bytes, sha256, coverage, conflicts, exchange_ids)
     values (?, ?, ?, ?, ?, ?, ?, ?, ?, ?, ?, ?, ?, ?)`,
  );
  const exId = (ref: { link: string; seq: number }) => exchangeIdOfRequest.get(refKey(ref.link, ref.seq)) ?? null;
  db.transaction(() => {
    for (const f of files) {
      const bytes = Buffer.from(f.bytes.buffer, f.bytes.byteOffset, f.bytes.length);
      insertFile.run(
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
    }
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

/** Deletes a call run's rows and marks it cleared. */
export function clearCallRunRows(db: Database.Database, runId: number): void {
  db.transaction(() => {
    db.prepare('delete from exchange_frames where run_id = ?').run(runId);
    db.prepare('delete from exchanges where run_id = ?').run(runId);
    db.prepare('delete from recovered_files where run_id = ?').run(runId);
    db.prepare('update call_runs set rows_cleared = 1 where id = ?').run(runId);
  }).immediate();
}

/** Call runs whose rows nobody reads: finished and not their capture's visible run. */
export function staleCallRuns(db: Database.Database): number[] {
  return db
    .prepare(
      `select r.id from call_runs r left join capture_call_layers l on l.current_run_id = r.id
       where r.rows_cleared = 0 and l.capture_id is null
         and (r.state in ('done', 'failed')
              or exists (select 1 from decode_jobs j where j.id = r.decode_job_id and j.state in ('failed', 'cancelled', 'interrupted')))
       order by r.id`,
    )
    .pluck()
    .all() as number[];
}

/** After a crash or a deleted capture: runs left queued or running fail, rows of unknown runs go. */
export function recoverCallRuns(db: Database.Database): void {
  db.prepare("update call_runs set state = 'failed', error = 'The server stopped during this run; choose the map again.', finished_at = ? where state in ('queued', 'running')").run(Date.now());
  for (const id of staleCallRuns(db)) clearCallRunRows(db, id);
  for (const table of ['exchanges', 'exchange_frames', 'recovered_files']) {
    db.prepare(`delete from ${table} where run_id not in (select id from call_runs)`).run();
  }
}

/**
 * Makes a finished call run the visible one (inside the caller's transaction when it has one):
 * only when its decode run is still the capture's visible run.
 */
export function switchToCallRun(db: Database.Database, captureId: number, runId: number, counts: { exchanges: number; files: number }): boolean {
  const decodeJobId = db.prepare('select decode_job_id from call_runs where id = ?').pluck().get(runId) as number;
  const current = db.prepare('select current_job_id from captures where id = ?').pluck().get(captureId) as number | null | undefined;
  if (current !== decodeJobId) return false;
  db.prepare("update call_runs set state = 'done', exchanges = ?, files = ?, finished_at = ? where id = ?").run(counts.exchanges, counts.files, Date.now(), runId);
  db.prepare(
    'insert into capture_call_layers (capture_id, map_id, map_version, current_run_id) values (?, null, null, ?) on conflict(capture_id) do update set current_run_id = excluded.current_run_id',
  ).run(captureId, runId);
  return true;
}
