// Clearing the rows of runs nobody reads any more: replaced, failed, cancelled or interrupted
// decode runs and call runs. Short transactions, so readers and a running worker are not held up.
import type Database from 'better-sqlite3';
import { and, asc, between, eq, exists, inArray, isNull, notInArray, or } from 'drizzle-orm';
import { drizzle } from 'drizzle-orm/better-sqlite3';
import * as schema from '../db/schema';
import { callRuns, captureCallLayers, captures, decodeJobs, exchangeFrames, exchanges, faultRows, faultSummaries, frames, lineEvents, recoveredFiles, seekPoints } from '../db/schema';
import { dropSearchEntries } from './search-index';

const orm = (sqlite: Database.Database) => drizzle(sqlite, { schema });

/**
 * Deletes a run's rows in batches (each its own short transaction, so readers and the worker
 * are not held up long), then marks the run as cleared. Returns false while rows remain when
 * `maxBatches` ran out, so a caller can yield between calls.
 */
export function clearRunRows(sqlite: Database.Database, jobId: number, maxBatches = Infinity, batch = 5000): boolean {
  const db = orm(sqlite);
  const ids = db.select({ id: frames.id }).from(frames).where(eq(frames.jobId, jobId)).orderBy(asc(frames.id)).limit(batch).prepare();
  // only entries that were added may be deleted: a 'delete' of an absent entry corrupts an FTS5 index
  const indexedTo = db.select({ to: decodeJobs.searchIndexedTo }).from(decodeJobs).where(eq(decodeJobs.id, jobId)).get()?.to ?? 0;
  const step = sqlite.transaction((from: number, to: number) => {
    if (from <= indexedTo) dropSearchEntries(sqlite, jobId, from, Math.min(to, indexedTo));
    db.delete(frames)
      .where(and(eq(frames.jobId, jobId), between(frames.id, from, to)))
      .run();
  });
  for (let k = 0; k < maxBatches; k++) {
    const found = ids.all().map((r) => r.id);
    if (found.length === 0) {
      sqlite
        .transaction(() => {
          db.delete(lineEvents).where(eq(lineEvents.jobId, jobId)).run();
          db.delete(seekPoints).where(eq(seekPoints.jobId, jobId)).run();
          db.delete(faultRows).where(eq(faultRows.jobId, jobId)).run();
          db.delete(faultSummaries).where(eq(faultSummaries.jobId, jobId)).run();
          // the call layer's rows over these frames go with them
          const runsOfJob = db.select({ id: callRuns.id }).from(callRuns).where(eq(callRuns.decodeJobId, jobId));
          db.delete(exchangeFrames).where(inArray(exchangeFrames.runId, runsOfJob)).run();
          db.delete(exchanges).where(inArray(exchanges.runId, runsOfJob)).run();
          db.delete(recoveredFiles).where(inArray(recoveredFiles.runId, runsOfJob)).run();
          db.update(callRuns).set({ rowsCleared: true }).where(eq(callRuns.decodeJobId, jobId)).run();
          db.update(decodeJobs).set({ rowsCleared: true }).where(eq(decodeJobs.id, jobId)).run();
        })
        .immediate();
      return true;
    }
    step.immediate(found[0], found[found.length - 1]);
  }
  return false;
}

/** Deletes a call run's rows and marks it cleared. */
export function clearCallRunRows(sqlite: Database.Database, runId: number): void {
  const db = orm(sqlite);
  sqlite
    .transaction(() => {
      db.delete(exchangeFrames).where(eq(exchangeFrames.runId, runId)).run();
      db.delete(exchanges).where(eq(exchanges.runId, runId)).run();
      db.delete(recoveredFiles).where(eq(recoveredFiles.runId, runId)).run();
      db.update(callRuns).set({ rowsCleared: true }).where(eq(callRuns.id, runId)).run();
    })
    .immediate();
}

/** Call runs whose rows nobody reads: finished and not their capture's visible run. */
export function staleCallRuns(sqlite: Database.Database): number[] {
  const db = orm(sqlite);
  const decodeGone = db
    .select({ id: decodeJobs.id })
    .from(decodeJobs)
    .where(and(eq(decodeJobs.id, callRuns.decodeJobId), inArray(decodeJobs.state, ['failed', 'cancelled', 'interrupted'])));
  return db
    .select({ id: callRuns.id })
    .from(callRuns)
    .leftJoin(captureCallLayers, eq(captureCallLayers.currentRunId, callRuns.id))
    .where(and(eq(callRuns.rowsCleared, false), isNull(captureCallLayers.captureId), or(inArray(callRuns.state, ['done', 'failed']), exists(decodeGone))))
    .orderBy(callRuns.id)
    .all()
    .map((r) => r.id);
}

/** After a crash or a deleted capture: runs left queued or running fail, rows of unknown runs go. */
export function recoverCallRuns(sqlite: Database.Database): void {
  const db = orm(sqlite);
  db.update(callRuns)
    .set({ state: 'failed', error: 'The server stopped during this run; choose the map again.', finishedAt: new Date() })
    .where(inArray(callRuns.state, ['queued', 'running']))
    .run();
  for (const id of staleCallRuns(sqlite)) clearCallRunRows(sqlite, id);
  const known = db.select({ id: callRuns.id }).from(callRuns);
  db.delete(exchanges).where(notInArray(exchanges.runId, known)).run();
  db.delete(exchangeFrames).where(notInArray(exchangeFrames.runId, known)).run();
  db.delete(recoveredFiles).where(notInArray(recoveredFiles.runId, known)).run();
}

/** decode runs whose rows are not needed: finished, not cleared, and not the visible run of their capture */
export function staleRuns(sqlite: Database.Database): number[] {
  const db = orm(sqlite);
  return db
    .select({ id: decodeJobs.id })
    .from(decodeJobs)
    .leftJoin(captures, eq(captures.currentJobId, decodeJobs.id))
    .where(and(notInArray(decodeJobs.state, ['queued', 'running']), eq(decodeJobs.rowsCleared, false), isNull(captures.id)))
    .orderBy(decodeJobs.id)
    .all()
    .map((r) => r.id);
}
