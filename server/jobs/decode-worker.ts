// One decode run, in a worker thread: streams the stored capture into the decoder and writes
// frames and line events into SQLite through its own connection, tagged with the run's job id.
// The run's rows become visible only in the final transaction, which points the capture at it.
import fs from 'node:fs';
import { parentPort, workerData } from 'node:worker_threads';
import Database from 'better-sqlite3';
import { and, eq, sql } from 'drizzle-orm';
import { drizzle } from 'drizzle-orm/better-sqlite3';
import { createDecoder, type Decoder } from '../../shared/decoder';
import type { DecodeIssue } from '../../shared/decoder';
import type { Exchange } from '../../shared/decoder/calls';
import type { FieldMap } from '../../shared/decoder/calls';
import { createCallRun, switchToCallRun } from '../runs/call-runs';
import { dropCallRows, InStreamCalls, runCallStage } from '../runs/call-stage';
import { decoderOptions } from '../../shared/decoder-options';
import { FaultRecorder, faultCallKey, storeFaultReport } from '../runs/fault-rows';
import { loadMapVersion, type RunInputs } from '../runs/inputs';
import { RunWriter } from '../runs/run-writer';
import { indexSearch } from '../runs/search-index';
import { threadCpuMs } from '../runs/thread-cpu';
import { decodeNice, lowerThreadPriority, nameThread } from './thread-priority';
import { CsvSeekTracker } from '../runs/seek/csv-seek';
import { type SeekPoint, VcdSeekTracker } from '../runs/seek/vcd-seek';
import { raceDeskOptions } from '../runs/fault-races';
import * as schema from '../db/schema';
import { callRuns, captures, decodeJobs, seekPoints } from '../db/schema';

const ph = sql.placeholder;

export interface DecodeWorkerData {
  dbPath: string;
  jobId: number;
  captureId: number;
  filePath: string;
  /** the run's inputs snapshot (decode_jobs.inputs) */
  inputs: RunInputs;
}

/** milliseconds per phase of a finished run, for the ingest benchmark */
export interface IngestTimings {
  /** reading and decoding, without the row writer and fault desk */
  decode: number;
  /** building frame and event rows */
  rows: number;
  /** batched inserts of frames and events */
  inserts: number;
  faults: number;
  calls: number;
  commit: number;
  /** from the worker's start to the run visible */
  visible: number;
  /** building the search index, after the run became visible */
  searchIndex: number;
  /** CPU milliseconds of the worker thread: decode with rows and inserts, start to visible, search index */
  cpu: { decodeAndRows: number; toVisible: number; searchIndex: number };
}
export type DecodeWorkerMessage = { type: 'done'; frames: number; events: number; timings: IngestTimings } | { type: 'failed'; error: string };
/** the run became its capture's visible one; the worker goes on with the search index */
export interface DecodeWorkerVisible {
  type: 'visible';
}
/** sent at least every PROGRESS_MS while the worker moves on: the runner's watchdog listens */
export interface DecodeWorkerProgress {
  type: 'progress';
  bytesRead: number;
  bytesTotal: number;
  /** time into the capture of the latest frame or event, once the time base is known */
  seconds: number | null;
}

const PROGRESS_MS = 250;
const CHUNK = 1 << 20;

export function describeIssue(issue: DecodeIssue): string {
  const where = issue.line !== undefined ? `line ${issue.line}, byte ${issue.offset}` : `byte ${issue.offset}`;
  return `${issue.message} (at ${where})`;
}

async function run(data: DecodeWorkerData): Promise<DecodeWorkerMessage> {
  const db = new Database(data.dbPath);
  db.pragma('journal_mode = WAL');
  db.pragma('busy_timeout = 10000');
  // WAL with NORMAL sync stays consistent after a crash; a larger page cache keeps the index inserts in memory
  db.pragma('synchronous = NORMAL');
  db.pragma('cache_size = -131072');
  // bulk load: sort spills of the index build stay in memory; the WAL is checkpointed in larger
  // steps. Durability is unchanged: the run becomes visible only in its final transaction.
  db.pragma('temp_store = MEMORY');
  db.pragma('wal_autocheckpoint = 4096');
  const d = drizzle(db, { schema });
  try {
    const cpuStart = threadCpuMs();
    let period = 0;
    // Frames reach the writer during push(), as soon as the reader's header has set the time base,
    // so the writer asks the decoder itself rather than a copy taken between pushes.
    const periodNow = () => decoder.samplePeriodSeconds ?? period;
    const writer = new RunWriter(db, data.jobId, data.captureId, periodNow);
    const faults = new FaultRecorder(periodNow, faultCallKey(db, data.inputs), raceDeskOptions(db, data.inputs));
    // the call layer runs beside the decoder; it is created with the first item, once the time base is known
    const callRun = startCallRun(db, data);
    let calls: InStreamCalls | null = null;
    let callsPeriod = 0;
    const inStream = (): InStreamCalls | null => {
      if (calls || !callRun.map) return calls;
      callsPeriod = periodNow();
      calls = new InStreamCalls(
        db,
        { captureId: data.captureId, runId: callRun.runId!, map: callRun.map, inputs: data.inputs, samplePeriod: callsPeriod },
        (ordinal) => writer.idOf(ordinal),
      );
      const c = calls;
      writer.afterFlush = () => c.afterFlush();
      return calls;
    };
    const decoder: Decoder = createDecoder(
      { ...decoderOptions(data.inputs.capture), anomalies: faults },
      {
        frame: (f) => {
          const t = performance.now();
          const ordinal = writer.frames;
          writer.frame(f);
          const u = performance.now();
          faults.frame(f);
          const v = performance.now();
          inStream()?.frame(f, ordinal, f.firstSample * periodNow());
          sinkRows += u - t;
          sinkFaults += v - u;
          sinkCalls += performance.now() - v;
        },
        event: (e) => {
          writer.event(e);
          faults.event(e);
          inStream()?.event(e);
        },
      },
    );
    // time spent inside the decoder's sink: subtracted from the decode phase
    let sinkRows = 0;
    let sinkFaults = 0;
    let sinkCalls = 0;
    const started = performance.now();
    const addSeek = d.insert(seekPoints).values({ jobId: data.jobId, byteOffset: ph('byteOffset'), sample: ph('sample'), levels: ph('levels') }).prepare();
    const addPoint = (p: SeekPoint) => addSeek.run({ byteOffset: p.byteOffset, sample: p.sample, levels: JSON.stringify(p.levels) });
    const seek =
      data.inputs.capture.format === 'vcd'
        ? new VcdSeekTracker(addPoint)
        : data.inputs.capture.format === 'csv'
          ? new CsvSeekTracker({ sampleRate: data.inputs.capture.sampleRate ?? undefined }, addPoint)
          : null;
    const progressUpdate = d
      .update(decodeJobs)
      .set({ bytesRead: sql`${ph('bytesRead')}`, frames: sql`${ph('frames')}`, events: sql`${ph('events')}`, stage: sql`${ph('stage')}` })
      .where(and(eq(decodeJobs.id, data.jobId), eq(decodeJobs.state, 'running')))
      .prepare();
    const progress = { run: (bytesRead: number, frames: number, events: number, stage: string) => progressUpdate.run({ bytesRead, frames, events, stage }) };
    const bytesTotal = fs.statSync(data.filePath).size;
    d.update(decodeJobs).set({ stage: 'decoding', bytesTotal }).where(eq(decodeJobs.id, data.jobId)).run();
    let bytes = 0;
    const heartbeat = () =>
      parentPort?.postMessage({
        type: 'progress',
        bytesRead: bytes,
        bytesTotal,
        seconds: period > 0 ? writer.lastSample * period : null,
      } satisfies DecodeWorkerProgress);
    heartbeat();
    let lastReport = Date.now();
    for await (const chunk of fs.createReadStream(data.filePath, { highWaterMark: CHUNK })) {
      const bytesIn = new Uint8Array((chunk as Buffer).buffer, (chunk as Buffer).byteOffset, (chunk as Buffer).length);
      decoder.push(bytesIn);
      seek?.push(bytesIn, bytes);
      bytes += bytesIn.length;
      if (decoder.fatal()) break;
      period = decoder.samplePeriodSeconds ?? period;
      const now = Date.now();
      if (now - lastReport >= PROGRESS_MS) {
        // the rows reported are the rows stored: a run stopped here leaves exactly these to clear
        writer.flush();
        progress.run(bytes, writer.frames, writer.events, 'decoding');
        heartbeat();
        lastReport = now;
      }
    }
    if (!decoder.fatal()) decoder.finish();
    period = decoder.samplePeriodSeconds ?? period;
    const fatal = decoder.fatal();
    if (fatal) return { type: 'failed', error: describeIssue(fatal) };
    writer.flush();
    writer.afterFlush = null;
    const decoded = performance.now();
    const cpuDecoded = threadCpuMs();
    progress.run(bytes, writer.frames, writer.events, 'calls');
    heartbeat();
    // the call layer's exchanges reach the fault desk (receiver over-run symptoms) before its report is stored
    const callCounts = await finishCalls(db, data, callRun, calls as InStreamCalls | null, callsPeriod, period, heartbeat, (e) => faults.exchange(e));
    const called = performance.now();
    const report = faults.report(writer.lastSample);
    storeFaultReport(db, data.jobId, data.captureId, period, report);
    const faulted = performance.now();
    const issues = decoder.issues.slice(0, 20).map(describeIssue);
    const committed = db.transaction(() => {
      // the search index is built after the switch: frames above search_indexed_to up to
      // last_frame_id are searched directly until it is (search-index.ts)
      const done = d
        .update(decodeJobs)
        .set({
          state: 'done',
          stage: writer.frames > 0 ? 'search index' : 'done',
          bytesRead: bytes,
          frames: writer.frames,
          events: writer.events,
          samplePeriod: period,
          links: JSON.stringify(decoder.links),
          lastSample: writer.lastSample,
          issues: JSON.stringify(issues),
          finishedAt: new Date(),
          searchIndexedTo: Math.max(0, writer.firstId - 1),
          lastFrameId: writer.lastId,
        })
        .where(and(eq(decodeJobs.id, data.jobId), eq(decodeJobs.state, 'running')))
        .run();
      // cancelled meanwhile: the rows stay invisible and the runner clears them
      if (done.changes === 0) return false;
      d.update(captures).set({ currentJobId: data.jobId }).where(eq(captures.id, data.captureId)).run();
      // the call layer's exchanges and files appear together with the frames they came from
      if (callCounts && callRun.runId !== null) switchToCallRun(db, data.captureId, callRun.runId, callCounts);
      return true;
    }).immediate();
    if (!committed) return { type: 'failed', error: 'The run was cancelled.' };
    const visible = performance.now();
    const cpuVisible = threadCpuMs();
    parentPort?.postMessage({ type: 'visible' } satisfies DecodeWorkerVisible);
    if (writer.frames > 0) {
      indexSearch(db, data.jobId, { range: { lo: writer.firstId, hi: writer.lastId }, onChunk: heartbeat });
      d.update(decodeJobs).set({ stage: 'done' }).where(and(eq(decodeJobs.id, data.jobId), eq(decodeJobs.stage, 'search index'))).run();
    }
    // row building time includes the inserts of the batches it filled
    const rows = sinkRows - writer.insertMs;
    const timings: IngestTimings = {
      decode: decoded - started - sinkRows - sinkFaults - sinkCalls,
      rows,
      inserts: writer.insertMs,
      faults: sinkFaults + (faulted - called),
      calls: sinkCalls + (called - decoded),
      commit: visible - faulted,
      visible: visible - started,
      searchIndex: performance.now() - visible,
      cpu: { decodeAndRows: cpuDecoded - cpuStart, toVisible: cpuVisible - cpuStart, searchIndex: threadCpuMs() - cpuVisible },
    };
    return { type: 'done', frames: writer.frames, events: writer.events, timings };
  } finally {
    db.close();
  }
}

interface CallRunStart {
  runId: number | null;
  map: FieldMap | null;
  error: string | null;
}

/** The decode run's call run, created before the decode so the call layer can run beside it. */
function startCallRun(db: Database.Database, data: DecodeWorkerData): CallRunStart {
  let runId: number | null = null;
  try {
    runId = createCallRun(db, data.captureId, data.jobId, data.inputs, 'running');
    const { map } = loadMapVersion(db, data.inputs.fieldMap.mapId, data.inputs.fieldMap.version);
    return { runId, map, error: null };
  } catch (err) {
    return { runId, map: null, error: err instanceof Error ? err.message : String(err) };
  }
}

/**
 * Ends the call run: the in-stream layer's result when it saw the frames in stored order with the
 * run's final time base, else the stage over the stored frames. A failure here (a stored map that
 * no longer parses, say) fails the call run, not the decode.
 */
async function finishCalls(
  db: Database.Database,
  data: DecodeWorkerData,
  run: CallRunStart,
  calls: InStreamCalls | null,
  callsPeriod: number,
  period: number,
  heartbeat: () => void,
  onExchange: (e: Exchange) => void,
): Promise<{ exchanges: number; files: number } | null> {
  const fail = (message: string) => {
    if (run.runId !== null)
      drizzle(db, { schema })
        .update(callRuns)
        .set({ state: 'failed', error: `The call layer stopped: ${message}`, finishedAt: new Date() })
        .where(eq(callRuns.id, run.runId))
        .run();
    return null;
  };
  if (run.runId === null || run.map === null) return fail(run.error ?? 'no call run');
  try {
    if (calls && calls.failure !== null) throw calls.failure;
    if (calls && !calls.broken && callsPeriod === period) {
      const counts = calls.finish();
      for (const e of calls.exchanges) onExchange(e);
      return counts;
    }
    // read the stored run instead: what the in-stream layer wrote so far goes first
    dropCallRows(db, run.runId);
    return await runCallStage(db, { captureId: data.captureId, decodeJobId: data.jobId, runId: run.runId, map: run.map, inputs: data.inputs, samplePeriod: period, pause: async () => heartbeat(), onExchange });
  } catch (err) {
    return fail(err instanceof Error ? err.message : String(err));
  }
}

if (parentPort && workerData) {
  // before the first byte: the decode, its call layer and the search index all yield to requests
  lowerThreadPriority(decodeNice());
  nameThread('flagline-decode');
  run(workerData as DecodeWorkerData).then(
    (msg) => parentPort!.postMessage(msg),
    (err: unknown) => parentPort!.postMessage({ type: 'failed', error: err instanceof Error ? err.message : String(err) } satisfies DecodeWorkerMessage),
  );
}
