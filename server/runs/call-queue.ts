// Call-only re-runs (a capture's map changed): one at a time, in the server process, reading the
// visible decode run's frames a page at a time and yielding to requests between pages. Each run
// has its own inputs snapshot (call_runs.inputs). The previous call run stays visible until the
// new one switches over in one transaction.
import type Database from 'better-sqlite3';
import { and, eq, gt, inArray } from 'drizzle-orm';
import { drizzle } from 'drizzle-orm/better-sqlite3';
import * as schema from '../db/schema';
import { callRuns, decodeJobs } from '../db/schema';
import { switchToCallRun } from './call-runs';
import { runCallStage } from './call-stage';
import type { DecodeQueue } from './decode-queue';
import { loadMapVersion, parseRunInputs } from './inputs';

export class CallQueue {
  private readonly queue: number[] = [];
  private running = false;
  private closed = false;
  private readonly idleWaiters: (() => void)[] = [];
  private readonly d: ReturnType<typeof drizzle<typeof schema>>;

  constructor(
    private readonly sqlite: Database.Database,
    private readonly jobs: DecodeQueue,
  ) {
    this.d = drizzle(sqlite, { schema });
  }

  enqueue(runId: number): void {
    this.queue.push(runId);
    queueMicrotask(() => void this.next());
  }

  /** Resolves when no call run is queued or running (tests). */
  idle(): Promise<void> {
    if (!this.running && this.queue.length === 0) return Promise.resolve();
    return new Promise((r) => this.idleWaiters.push(r));
  }

  close(): void {
    this.closed = true;
    this.queue.length = 0;
  }

  private async next(): Promise<void> {
    if (this.running || this.closed) return;
    const runId = this.queue.shift();
    if (runId === undefined) {
      this.idleWaiters.splice(0).forEach((r) => r());
      return;
    }
    this.running = true;
    try {
      await this.run(runId);
    } catch (err) {
      if (this.sqlite.open) this.fail(runId, `The call layer stopped: ${err instanceof Error ? err.message : String(err)}`);
    } finally {
      this.running = false;
      if (this.sqlite.open && !this.closed) this.jobs.sweepSoon();
      void this.next();
    }
  }

  private fail(runId: number, error: string): void {
    this.d
      .update(callRuns)
      .set({ state: 'failed', error, finishedAt: new Date() })
      .where(and(eq(callRuns.id, runId), inArray(callRuns.state, ['queued', 'running'])))
      .run();
  }

  private async run(runId: number): Promise<void> {
    const run = this.d
      .select({
        id: callRuns.id,
        captureId: callRuns.captureId,
        decodeJobId: callRuns.decodeJobId,
        mapId: callRuns.mapId,
        mapVersion: callRuns.mapVersion,
        state: callRuns.state,
        inputs: callRuns.inputs,
        settings: decodeJobs.settings,
        samplePeriod: decodeJobs.samplePeriod,
      })
      .from(callRuns)
      .innerJoin(decodeJobs, eq(decodeJobs.id, callRuns.decodeJobId))
      .where(eq(callRuns.id, runId))
      .get();
    if (!run || run.state !== 'queued') return;
    // a later choice for the same capture replaces this one before it starts
    const newer = this.d
      .select({ id: callRuns.id })
      .from(callRuns)
      .where(and(eq(callRuns.captureId, run.captureId), gt(callRuns.id, run.id), eq(callRuns.state, 'queued')))
      .get();
    if (newer) return this.fail(runId, 'A later map choice replaced this run before it started.');
    this.d.update(callRuns).set({ state: 'running' }).where(eq(callRuns.id, runId)).run();
    const inputs = parseRunInputs(run.inputs, { settings: run.settings, fieldMap: { mapId: run.mapId, version: run.mapVersion } });
    const m = loadMapVersion(this.sqlite, inputs.fieldMap.mapId, inputs.fieldMap.version);
    const counts = await runCallStage(this.sqlite, {
      captureId: run.captureId,
      decodeJobId: run.decodeJobId,
      runId,
      map: m.map,
      inputs,
      samplePeriod: run.samplePeriod ?? 0,
      pause: () => new Promise((r) => setImmediate(r)),
    });
    if (this.closed || !this.sqlite.open) return;
    const switched = this.sqlite.transaction(() => switchToCallRun(this.sqlite, run.captureId, runId, counts)).immediate();
    if (!switched) this.fail(runId, 'The capture was decoded again meanwhile; that decode applied the map.');
  }
}
