// One decode run, in a worker thread: the capture is decoded in a thread of its own (the decoder
// thread, decode-thread.ts, started from here), and this thread writes what it hands over —
// frames and line events into SQLite through its own connection, tagged with the run's job id —
// runs the call layer beside it, stores the fault desk's report, and makes the run visible in
// the final transaction, which points the capture at it. Then it builds the search index.
import fs from 'node:fs';
import { parentPort, Worker, workerData } from 'node:worker_threads';
import Database from 'better-sqlite3';
import { and, eq, sql } from 'drizzle-orm';
import { drizzle } from 'drizzle-orm/better-sqlite3';
import type { Exchange } from '../../shared/decoder/calls';
import type { FieldMap } from '../../shared/decoder/calls';
import { createCallRun, switchToCallRun } from '../runs/call-runs';
import { dropCallRows, InStreamCalls, runCallStage } from '../runs/call-stage';
import { storeFaultReport } from '../runs/fault-rows';
import { type BatchSink, type FrameBatch, unpackBatch } from '../runs/frame-batch';
import { loadMapVersion, type RunInputs } from '../runs/inputs';
import { RunWriter } from '../runs/run-writer';
import { indexSearch } from '../runs/search-index';
import { threadCpuMs } from '../runs/thread-cpu';
import { decodeCapture, type DecodeThreadData, type DecodeThreadExchanges, type DecodeThreadMessage } from './decode-capture';
import { decodeNice, lowerThreadPriority, nameThread } from './thread-priority';
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
  /** reading and decoding (decoder thread), without packing and the fault desk */
  decode: number;
  /** packing frames and events for the hand-over (decoder thread) */
  pack: number;
  /** unpacking them and storing seek points (this thread) */
  unpack: number;
  /** building frame and event rows */
  rows: number;
  /** batched inserts of frames and events */
  inserts: number;
  /** the fault desk (decoder thread) and storing its report */
  faults: number;
  calls: number;
  commit: number;
  /** from the worker's start to the run visible */
  visible: number;
  /** building the search index, after the run became visible */
  searchIndex: number;
  /** the decoder thread waiting for this one to take its batches: the writing is the slower side */
  decoderWaiting: number;
  /** this thread waiting for batches until the decoder's end: the decoding is the slower side */
  writerWaiting: number;
  /**
   * CPU milliseconds of the worker thread (decode with rows and inserts, start to visible, search
   * index) and of the decoder thread
   */
  cpu: { decodeAndRows: number; toVisible: number; searchIndex: number; decoderThread: number };
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
  let thread: DecodeThread | null = null;
  try {
    const cpuStart = threadCpuMs();
    const started = performance.now();
    // the decoder runs in a thread of its own from the start (a small capture's here, first);
    // this thread stores what it hands over
    const bytesTotal = fs.statSync(data.filePath).size;
    const taken = new Int32Array(new SharedArrayBuffer(4));
    const inbox = new DecodeThreadInbox();
    const threadData: DecodeThreadData = { dbPath: data.dbPath, filePath: data.filePath, inputs: data.inputs, taken: taken.buffer as SharedArrayBuffer };
    thread = bytesTotal < INLINE_BYTES ? decodeHere({ ...threadData, taken: null }, inbox) : startDecodeThread(threadData, inbox);
    // the seconds per sample of the records being stored, as the decoder had it when it let them out
    let period = 0;
    const writer = new RunWriter(db, data.jobId, data.captureId, () => period);
    // the call layer runs beside the decoder; it is created with the first item, once the time base is known
    const callRun = startCallRun(db, data);
    let calls: InStreamCalls | null = null;
    let callsPeriod = 0;
    const inStream = (): InStreamCalls | null => {
      if (calls || !callRun.map) return calls;
      callsPeriod = period;
      calls = new InStreamCalls(
        db,
        { captureId: data.captureId, runId: callRun.runId!, map: callRun.map, inputs: data.inputs, samplePeriod: callsPeriod },
        (ordinal) => writer.idOf(ordinal),
      );
      const c = calls;
      writer.afterFlush = () => c.afterFlush();
      return calls;
    };
    // time in the row writer (with the inserts of the batches it filled) and in the call layer
    let sinkRows = 0;
    let sinkInserts = 0;
    let sinkCalls = 0;
    const sink: BatchSink = {
      period: (p) => (period = p),
      frame: (f) => {
        const t = performance.now();
        const inserted = writer.insertMs;
        const ordinal = writer.frames;
        writer.frame(f);
        const u = performance.now();
        inStream()?.frame(f, ordinal, f.firstSample * period);
        sinkRows += u - t;
        sinkInserts += writer.insertMs - inserted;
        sinkCalls += performance.now() - u;
      },
      event: (e) => {
        const t = performance.now();
        const inserted = writer.insertMs;
        writer.event(e);
        const u = performance.now();
        inStream()?.event(e);
        sinkRows += u - t;
        sinkInserts += writer.insertMs - inserted;
        sinkCalls += performance.now() - u;
      },
    };
    const strings: string[] = [];
    const addSeek = d.insert(seekPoints).values({ jobId: data.jobId, byteOffset: ph('byteOffset'), sample: ph('sample'), levels: ph('levels') }).prepare();
    const progressUpdate = d
      .update(decodeJobs)
      .set({ bytesRead: sql`${ph('bytesRead')}`, frames: sql`${ph('frames')}`, events: sql`${ph('events')}`, stage: sql`${ph('stage')}` })
      .where(and(eq(decodeJobs.id, data.jobId), eq(decodeJobs.state, 'running')))
      .prepare();
    const progress = { run: (bytesRead: number, frames: number, events: number, stage: string) => progressUpdate.run({ bytesRead, frames, events, stage }) };
    d.update(decodeJobs).set({ stage: 'decoding', bytesTotal }).where(eq(decodeJobs.id, data.jobId)).run();
    let bytes = 0;
    const heartbeat = () =>
      parentPort?.postMessage({
        type: 'progress',
        bytesRead: bytes,
        bytesTotal,
        seconds: period > 0 ? writer.lastSample * period : null,
      } satisfies DecodeWorkerProgress);
    // the first report waits for the decoder thread's first batch: until then that thread is still
    // loading its code, which the queue's watchdog allows for until a worker's first report
    let lastReport = 0;
    // time this thread works on batches (the rest, until the decoder's end, it waits for them)
    let busy = 0;
    let storing = 0;
    const store = (batch: FrameBatch) => {
      const t = performance.now();
      unpackBatch(batch, strings, sink);
      for (const p of batch.seek) addSeek.run({ byteOffset: p.byteOffset, sample: p.sample, levels: JSON.stringify(p.levels) });
      bytes = batch.bytesRead;
      storing += performance.now() - t;
    };
    let end: Extract<DecodeThreadMessage, { type: 'end' }> | null = null;
    while (!end) {
      const m = await inbox.next();
      if (m.type === 'report') throw new Error('the decoder thread reported before its end');
      store(m.batch);
      if (m.type === 'end') end = m;
      else {
        Atomics.add(taken, 0, 1);
        Atomics.notify(taken, 0);
      }
      const now = Date.now();
      if (now - lastReport >= PROGRESS_MS) {
        // the rows reported are the rows stored: a run stopped here leaves exactly these to clear
        const t = performance.now();
        writer.flush();
        progress.run(bytes, writer.frames, writer.events, 'decoding');
        busy += performance.now() - t;
        heartbeat();
        lastReport = now;
      }
    }
    if (end.fatal) return { type: 'failed', error: end.fatal };
    period = end.period;
    writer.flush();
    writer.afterFlush = null;
    const decoded = performance.now();
    const cpuDecoded = threadCpuMs();
    progress.run(bytes, writer.frames, writer.events, 'calls');
    heartbeat();
    // the call layer's exchanges reach the fault desk (receiver over-run symptoms) before its report is stored
    const exchanges: Exchange[] = [];
    const callCounts = await finishCalls(db, data, callRun, calls as InStreamCalls | null, callsPeriod, period, heartbeat, (e) => exchanges.push(e));
    const called = performance.now();
    thread.postMessage({ type: 'exchanges', exchanges, lastSample: writer.lastSample } satisfies DecodeThreadExchanges);
    const answer = await inbox.next();
    if (answer.type !== 'report') throw new Error('the decoder thread sent no fault report');
    const reported = performance.now();
    storeFaultReport(db, data.jobId, data.captureId, period, answer.report);
    const faulted = performance.now();
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
          links: JSON.stringify(end.links),
          lastSample: writer.lastSample,
          issues: JSON.stringify(end.issues),
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
    const timings: IngestTimings = {
      decode: end.timings.decode,
      pack: end.timings.pack,
      unpack: storing - sinkRows - sinkCalls,
      rows: sinkRows - sinkInserts,
      inserts: writer.insertMs,
      faults: end.timings.faults + answer.faultsMs + (faulted - reported),
      calls: sinkCalls + (called - decoded),
      commit: visible - faulted,
      visible: visible - started,
      searchIndex: performance.now() - visible,
      decoderWaiting: end.timings.waiting,
      writerWaiting: decoded - started - storing - busy,
      cpu: {
        decodeAndRows: cpuDecoded - cpuStart,
        toVisible: cpuVisible - cpuStart,
        searchIndex: threadCpuMs() - cpuVisible,
        decoderThread: end.timings.cpu + answer.cpuMs,
      },
    };
    return { type: 'done', frames: writer.frames, events: writer.events, timings };
  } finally {
    // a failure here leaves no thread decoding on
    if (thread) void thread.terminate();
    db.close();
  }
}

/**
 * Messages of the decoder thread, taken one at a time in order; its errors and an early exit
 * reject the next take.
 */
class DecodeThreadInbox {
  private readonly queue: DecodeThreadMessage[] = [];
  private waiting: { resolve: (m: DecodeThreadMessage) => void; reject: (err: Error) => void } | null = null;
  private failure: Error | null = null;

  put(m: DecodeThreadMessage): void {
    const w = this.waiting;
    if (w) {
      this.waiting = null;
      w.resolve(m);
    } else this.queue.push(m);
  }

  fail(err: Error): void {
    this.failure ??= err;
    const w = this.waiting;
    this.waiting = null;
    w?.reject(this.failure);
  }

  next(): Promise<DecodeThreadMessage> {
    const m = this.queue.shift();
    if (m) return Promise.resolve(m);
    if (this.failure) return Promise.reject(this.failure);
    return new Promise((resolve, reject) => (this.waiting = { resolve, reject }));
  }
}

/** the decoder side as the worker talks to it: a thread, or the same calls made here */
interface DecodeThread {
  postMessage(m: DecodeThreadExchanges): void;
  terminate(): Promise<unknown> | void;
}

/**
 * Captures below this size are decoded inside the worker before their rows are written: starting
 * a second thread (and, from sources, its TypeScript loader) would cost more than the overlap saves.
 */
const INLINE_BYTES = 4 << 20;

/** The decoder side run here, to its end, its batches queued in the inbox; then it waits for the exchanges. */
function decodeHere(data: DecodeThreadData, inbox: DecodeThreadInbox): DecodeThread {
  let answer: ((m: DecodeThreadExchanges) => void) | null = null;
  decodeCapture(data, {
    postMessage: (m) => inbox.put(m),
    once: (_event, listener) => (answer = listener),
    close: () => {},
  });
  return {
    postMessage: (m) => answer?.(m),
    terminate: () => {},
  };
}

function startDecodeThread(data: DecodeThreadData, inbox: DecodeThreadInbox): Worker {
  const thread = new Worker(decodeThreadModule(), { workerData: data });
  thread.on('message', (m: DecodeThreadMessage) => inbox.put(m));
  thread.on('error', (err) => inbox.fail(err));
  thread.on('exit', () => inbox.fail(new Error('The decoder thread stopped unexpectedly.')));
  return thread;
}

/**
 * Compiled: the build names the bundled decoder thread beside this bundle. From sources: a
 * JavaScript entry that registers tsx, as this worker's own.
 */
function decodeThreadModule(): URL {
  const bundled = typeof BUNDLED_DECODE_THREAD === 'string' ? BUNDLED_DECODE_THREAD : undefined;
  return new URL(bundled ?? './decode-thread-entry.mjs', import.meta.url);
}

/** replaced by the server build (server/cli/server-build.mjs, esbuild `define`); undeclared when run from sources */
declare const BUNDLED_DECODE_THREAD: string | undefined;

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
