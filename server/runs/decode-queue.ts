import { Worker } from 'node:worker_threads';
import type Database from 'better-sqlite3';
import { and, desc, eq, inArray } from 'drizzle-orm';
import { drizzle, type BetterSQLite3Database } from 'drizzle-orm/better-sqlite3';
import * as schema from '../db/schema';
import { captures, decodeJobs } from '../db/schema';
import type { CaptureStore } from '../storage/capture-store';
import type { DecodeWorkerData, DecodeWorkerMessage, DecodeWorkerProgress, DecodeWorkerVisible, IngestTimings } from '../jobs/decode-worker';
import type { RunInputs } from './inputs';
import { indexSearch, unindexedRuns } from './search-index';
import { clearCallRunRows, clearRunRows, recoverCallRuns, staleCallRuns, staleRuns } from './sweep';

const START_UP_ALLOWANCE_MS = 30_000;
/** frames per search-index step when the server finishes an index a stopped worker left (it yields between steps) */
const RESUME_INDEX_CHUNK = 5000;

interface Active {
  jobId: number;
  captureId: number;
  worker: Worker;
  /** the last position the worker reported, for the watchdog's message */
  position: { bytesRead: number; bytesTotal: number; seconds: number | null };
  lastProgressAt: number;
  /** set by killForTest: the exit is left unrecorded, as after a crash */
  killed: boolean;
  done: Promise<void>;
}

/**
 * The server's decode queue: one run at a time (the machine's cores are shared with the API),
 * each in a worker thread (server/jobs/decode-worker.ts) with its own database connection, under
 * a watchdog. Runs are rows in decode_jobs, created here with their inputs snapshot; this object
 * only holds the queue order and the live worker, and sweeps the rows of replaced runs.
 */
export class DecodeQueue {
  private readonly queue: number[] = [];
  private active: Active | null = null;
  private closed = false;
  private sweeping = false;
  private readonly idleWaiters: (() => void)[] = [];
  private readonly stallMs: number;
  private readonly db: BetterSQLite3Database<typeof schema>;

  constructor(
    private readonly sqlite: Database.Database,
    private readonly dbPath: string,
    private readonly store: CaptureStore,
    opts: { stallSeconds?: number } = {},
  ) {
    this.stallMs = (opts.stallSeconds ?? decodeStallSeconds()) * 1000;
    this.db = drizzle(sqlite, { schema });
  }

  /** phase times of the last finished run (the ingest benchmark prints them) */
  lastTimings: IngestTimings | null = null;
  /** when the last run became visible (Date.now(); the ingest benchmark) */
  visibleAt = 0;

  /** called after a run became its capture's visible one (the call queue checks for a map chosen meanwhile) */
  onVisible: ((captureId: number, jobId: number) => void) | null = null;

  /** Adds a queued run for the capture with its inputs snapshot and starts it when the queue is free. */
  enqueue(captureId: number, inputs: RunInputs, bytesTotal: number): number {
    const jobId = this.db
      .insert(decodeJobs)
      .values({ captureId, state: 'queued', stage: 'queued', bytesTotal, settings: JSON.stringify(inputs.capture), inputs: JSON.stringify(inputs) })
      .returning({ id: decodeJobs.id })
      .get().id;
    this.queue.push(jobId);
    queueMicrotask(() => this.next());
    return jobId;
  }

  isBusy(captureId: number): boolean {
    return this.liveRun(captureId) !== undefined;
  }

  /** the capture's queued or running run, if any */
  private liveRun(captureId: number): { id: number } | undefined {
    return this.db
      .select({ id: decodeJobs.id })
      .from(decodeJobs)
      .where(and(eq(decodeJobs.captureId, captureId), inArray(decodeJobs.state, ['queued', 'running'])))
      .orderBy(desc(decodeJobs.id))
      .limit(1)
      .get();
  }

  /** Stops the capture's queued or running run; its rows are cleared. */
  cancel(captureId: number): void {
    const job = this.liveRun(captureId);
    if (!job) return;
    this.db
      .update(decodeJobs)
      .set({ state: 'cancelled', stage: 'cancelled', finishedAt: new Date() })
      .where(and(eq(decodeJobs.id, job.id), inArray(decodeJobs.state, ['queued', 'running'])))
      .run();
    const at = this.queue.indexOf(job.id);
    if (at >= 0) this.queue.splice(at, 1);
    if (this.active?.jobId === job.id) void this.active.worker.terminate();
    else this.sweep();
  }

  /** Cancels the capture's run and waits until its worker is gone (before deleting the capture). */
  async stop(captureId: number): Promise<void> {
    const a = this.active;
    this.cancel(captureId);
    if (a && a.captureId === captureId) {
      // a run already visible may still be building its search index: that stops too
      void a.worker.terminate();
      await a.done;
    }
  }

  /**
   * After a crash: runs left queued or running are marked interrupted (the user can re-run),
   * and rows of every run that is not some capture's visible one are cleared.
   */
  recover(): void {
    this.db
      .update(decodeJobs)
      .set({ state: 'interrupted', stage: 'interrupted', error: 'The server stopped during this run; decode again.', finishedAt: new Date() })
      .where(inArray(decodeJobs.state, ['queued', 'running']))
      .run();
    this.queue.length = 0;
    this.sweepNow();
    // a visible run whose worker stopped while building the search index gets it finished
    if (unindexedRuns(this.sqlite).length > 0) this.sweep();
  }

  /** Tests only: kills the capture's worker without recording anything, as a crash would. */
  async killForTest(captureId: number): Promise<void> {
    const a = this.active;
    if (!a || a.captureId !== captureId) throw new Error(`no worker running for capture ${captureId}`);
    a.killed = true;
    await a.worker.terminate();
    await a.done;
  }

  /** Resolves when nothing is queued or running (tests, shutdown). */
  idle(): Promise<void> {
    if (!this.active && this.queue.length === 0 && !this.sweeping) return Promise.resolve();
    return new Promise((resolve) => this.idleWaiters.push(resolve));
  }

  async close(): Promise<void> {
    this.closed = true;
    this.queue.length = 0;
    const a = this.active;
    if (a) {
      a.killed = true;
      await a.worker.terminate();
    }
  }

  private next(): void {
    if (this.closed || this.active) return;
    const jobId = this.queue.shift();
    if (jobId === undefined) {
      if (!this.sweeping) this.idleWaiters.splice(0).forEach((r) => r());
      return;
    }
    const job = this.db
      .select({ captureId: decodeJobs.captureId, state: decodeJobs.state, inputs: decodeJobs.inputs, sha256: captures.sha256 })
      .from(decodeJobs)
      .innerJoin(captures, eq(captures.id, decodeJobs.captureId))
      .where(eq(decodeJobs.id, jobId))
      .get();
    if (!job || job.state !== 'queued' || job.inputs === null) return this.next();
    if (this.dbPath === ':memory:') {
      // a worker cannot reach an in-memory database
      this.finish(jobId, 'failed', 'Decoding needs the database in a file (FLAGLINE_DB); this server runs on an in-memory database.');
      return this.next();
    }
    this.db.update(decodeJobs).set({ state: 'running', stage: 'starting', startedAt: new Date() }).where(eq(decodeJobs.id, jobId)).run();
    const data: DecodeWorkerData = {
      dbPath: this.dbPath,
      jobId,
      captureId: job.captureId,
      filePath: this.store.pathOf(job.sha256),
      inputs: JSON.parse(job.inputs) as RunInputs,
    };
    const worker = new Worker(workerModule(), { workerData: data });
    let outcome: DecodeWorkerMessage | null = null;
    let resolveDone!: () => void;
    const active: Active = {
      jobId,
      captureId: job.captureId,
      worker,
      position: { bytesRead: 0, bytesTotal: 0, seconds: null },
      lastProgressAt: Date.now(),
      killed: false,
      done: new Promise((r) => (resolveDone = r)),
    };
    this.active = active;
    // The watchdog: a worker that reports no progress for stallMs is stuck (a decoder walking a
    // huge gap, say); it is stopped so the queue moves on, and the run fails naming where it was.
    // Until its first report the worker is still loading its code, which on a busy machine
    // can take a while; that gets a start-up allowance on top.
    let reported = false;
    const watchdog = setInterval(() => {
      if (Date.now() - active.lastProgressAt < this.stallMs + (reported ? 0 : START_UP_ALLOWANCE_MS)) return;
      clearInterval(watchdog);
      outcome = { type: 'failed', error: stallMessage(this.stallMs / 1000, active.position) };
      void worker.terminate();
    }, Math.min(1000, Math.max(50, this.stallMs / 4)));
    let visible = false;
    worker.on('message', (m: DecodeWorkerMessage | DecodeWorkerProgress | DecodeWorkerVisible) => {
      active.lastProgressAt = Date.now();
      reported = true;
      if (m.type === 'progress') active.position = { bytesRead: m.bytesRead, bytesTotal: m.bytesTotal, seconds: m.seconds };
      else if (m.type === 'visible') {
        // the worker goes on with the search index; the run is already the capture's visible one
        visible = true;
        this.visibleAt = Date.now();
        this.onVisible?.(active.captureId, jobId);
      } else outcome ??= m;
    });
    worker.on('error', (err) => (outcome ??= { type: 'failed', error: `The decoder stopped: ${err.message}` }));
    worker.on('exit', () => {
      clearInterval(watchdog);
      this.active = null;
      if (!active.killed && !this.closed) {
        const o = outcome as DecodeWorkerMessage | null;
        if (!o) this.finish(jobId, 'failed', 'The decode worker stopped unexpectedly.');
        else if (o.type === 'failed') this.finish(jobId, 'failed', o.error);
        else {
          this.lastTimings = o.timings;
          if (!visible) this.onVisible?.(active.captureId, jobId);
        }
        // a visible run's search index left unfinished (the watchdog, say) is finished by the sweep
        this.sweep();
      }
      resolveDone();
      this.next();
    });
  }

  private finish(jobId: number, state: 'failed', error: string): void {
    this.db
      .update(decodeJobs)
      .set({ state, stage: state, error, finishedAt: new Date() })
      .where(and(eq(decodeJobs.id, jobId), inArray(decodeJobs.state, ['queued', 'running'])))
      .run();
  }

  /** Clears stale runs a few batches at a time, yielding to requests in between. */
  private sweep(): void {
    if (this.sweeping || this.closed) return;
    this.sweeping = true;
    const step = () => {
      if (this.closed || !this.sqlite.open) {
        this.sweeping = false;
        return;
      }
      const staleCalls = staleCallRuns(this.sqlite);
      if (staleCalls.length > 0) {
        clearCallRunRows(this.sqlite, staleCalls[0]);
        setImmediate(step);
        return;
      }
      const stale = staleRuns(this.sqlite);
      if (stale.length === 0) {
        // the search index of a visible run that no worker builds any more
        const unindexed = unindexedRuns(this.sqlite).filter((r) => r.jobId !== this.active?.jobId);
        if (unindexed.length > 0) {
          const r = unindexed[0];
          indexSearch(this.sqlite, r.jobId, { range: { lo: r.lo, hi: r.hi }, chunk: RESUME_INDEX_CHUNK, maxChunks: 1 });
          setImmediate(step);
          return;
        }
        this.sweeping = false;
        if (!this.active && this.queue.length === 0) this.idleWaiters.splice(0).forEach((r) => r());
        return;
      }
      clearRunRows(this.sqlite, stale[0], 4);
      setImmediate(step);
    };
    setImmediate(step);
  }

  /** Starts the cleanup of replaced runs (after a call-only re-run switched runs). */
  sweepSoon(): void {
    this.sweep();
  }

  private sweepNow(): void {
    recoverCallRuns(this.sqlite);
    for (const id of staleRuns(this.sqlite)) clearRunRows(this.sqlite, id);
  }
}

/** Seconds without progress after which a decode is stopped: FLAGLINE_DECODE_STALL_S, default 60. */
export function decodeStallSeconds(): number {
  const raw = Number(process.env.FLAGLINE_DECODE_STALL_S);
  return Number.isFinite(raw) && raw > 0 ? raw : 60;
}

export function stallMessage(seconds: number, at: { bytesRead: number; bytesTotal: number; seconds: number | null }): string {
  const where =
    `byte ${at.bytesRead.toLocaleString('en-US')} of ${at.bytesTotal.toLocaleString('en-US')}` +
    (at.seconds !== null ? `, ${at.seconds.toPrecision(6)} s into the capture` : '');
  return `The decoder made no progress for ${seconds} s and was stopped at ${where}. The capture may have a huge time gap or settings that do not fit it; check the channel roles and rates, then decode again.`;
}

/**
 * The worker module: the real one, or under vitest one named by FLAGLINE_TEST_DECODE_WORKER
 * (tests of the watchdog need a worker that stalls on purpose).
 */
function workerModule(): URL {
  const testModule = process.env.VITEST ? process.env.FLAGLINE_TEST_DECODE_WORKER : undefined;
  if (testModule) return new URL(`file://${testModule}`);
  // compiled: the build names the bundled worker beside this bundle. From sources: a JavaScript
  // entry that registers tsx, so the TypeScript worker runs under `tsx` and vitest alike
  const bundled = typeof BUNDLED_DECODE_WORKER === 'string' ? BUNDLED_DECODE_WORKER : undefined;
  return new URL(bundled ?? '../jobs/decode-worker-entry.mjs', import.meta.url);
}

/** replaced by the server build (server/cli/server-build.mjs, esbuild `define`); undeclared when run from sources */
declare const BUNDLED_DECODE_WORKER: string | undefined;
