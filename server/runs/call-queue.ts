// Call-only re-runs (a capture's map changed): one at a time, in the server process, reading the
// visible decode run's frames a page at a time and yielding to requests between pages. Each run
// has its own inputs snapshot (call_runs.inputs). The previous call run stays visible until the
// new one switches over in one transaction.
import type Database from 'better-sqlite3';
import { switchToCallRun } from './call-runs';
import { runCallStage } from './call-stage';
import type { DecodeQueue } from './decode-queue';
import { loadMapVersion, parseRunInputs } from './inputs';

export class CallQueue {
  private readonly queue: number[] = [];
  private running = false;
  private closed = false;
  private readonly idleWaiters: (() => void)[] = [];

  constructor(
    private readonly sqlite: Database.Database,
    private readonly jobs: DecodeQueue,
  ) {}

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
    this.sqlite.prepare("update call_runs set state = 'failed', error = ?, finished_at = ? where id = ? and state in ('queued', 'running')").run(error, Date.now(), runId);
  }

  private async run(runId: number): Promise<void> {
    const run = this.sqlite
      .prepare(
        `select r.id, r.capture_id as captureId, r.decode_job_id as decodeJobId, r.map_id as mapId, r.map_version as mapVersion, r.state,
                r.inputs, j.settings, j.sample_period as samplePeriod
         from call_runs r join decode_jobs j on j.id = r.decode_job_id where r.id = ?`,
      )
      .get(runId) as
      | { id: number; captureId: number; decodeJobId: number; mapId: number; mapVersion: number; state: string; inputs: string | null; settings: string; samplePeriod: number | null }
      | undefined;
    if (!run || run.state !== 'queued') return;
    // a later choice for the same capture replaces this one before it starts
    const newer = this.sqlite.prepare("select 1 from call_runs where capture_id = ? and id > ? and state = 'queued'").get(run.captureId, run.id);
    if (newer) return this.fail(runId, 'A later map choice replaced this run before it started.');
    this.sqlite.prepare("update call_runs set state = 'running' where id = ?").run(runId);
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
