// The life of a call run (one pass of the call stage over a decode run's frames): created with
// its own inputs snapshot, switched to visible when done. The rows it writes are in call-stage.ts;
// clearing replaced runs in sweep.ts.
import { eq } from 'drizzle-orm';
import { dbOf, type Db, type Driver } from '../db/client';
import { callRuns, captureCallLayers, captures } from '../db/schema';
import type { RunInputs } from './inputs';

export function createCallRun(handle: Db | Driver, captureId: number, decodeJobId: number, inputs: RunInputs, state: 'queued' | 'running'): number {
  return dbOf(handle)
    .insert(callRuns)
    .values({ captureId, decodeJobId, mapId: inputs.fieldMap.mapId, mapVersion: inputs.fieldMap.version, inputs: JSON.stringify(inputs), state, createdAt: new Date() })
    .returning({ id: callRuns.id })
    .get().id;
}

/**
 * Makes a finished call run the visible one (inside the caller's transaction when it has one):
 * only when its decode run is still the capture's visible run.
 */
export function switchToCallRun(handle: Db | Driver, captureId: number, runId: number, counts: { exchanges: number; files: number }): boolean {
  const db = dbOf(handle);
  const run = db.select({ decodeJobId: callRuns.decodeJobId }).from(callRuns).where(eq(callRuns.id, runId)).get();
  const capture = db.select({ currentJobId: captures.currentJobId }).from(captures).where(eq(captures.id, captureId)).get();
  if (!run || capture?.currentJobId !== run.decodeJobId) return false;
  db.update(callRuns).set({ state: 'done', exchanges: counts.exchanges, files: counts.files, finishedAt: new Date() }).where(eq(callRuns.id, runId)).run();
  db.insert(captureCallLayers)
    .values({ captureId, mapId: null, mapVersion: null, currentRunId: runId })
    .onConflictDoUpdate({ target: captureCallLayers.captureId, set: { currentRunId: runId } })
    .run();
  return true;
}
