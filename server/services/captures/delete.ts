import { and, eq } from 'drizzle-orm';
import { driverOf } from '../../db/client';
import { captures, decodeJobs } from '../../db/schema';
import { clearRunRows } from '../../runs/sweep';
import type { CaptureDeps } from './deps';
import type { CaptureRow } from './rows';

/**
 * Deletes a capture with its runs' rows, its jobs and — when no other capture holds the same
 * content — its file. A running decode is stopped first so it cannot write after the cleanup.
 */
export async function deleteCapture(deps: CaptureDeps, c: CaptureRow): Promise<void> {
  await deps.jobs.stop(c.id);
  const jobIds = deps.db.select({ id: decodeJobs.id }).from(decodeJobs).where(eq(decodeJobs.captureId, c.id)).all();
  // the sweep clears run rows on the driver's handle (its search-index deletes are raw FTS5): the same connection, so in this transaction
  const sqlite = driverOf(deps.db);
  deps.db.transaction((tx) => {
    for (const { id } of jobIds) clearRunRows(sqlite, id);
    tx.delete(captures).where(eq(captures.id, c.id)).run();
  });
  // a capture decoded in the browser shares the hash of its original but holds no file
  const others = deps.db
    .select({ id: captures.id })
    .from(captures)
    .where(and(eq(captures.sha256, c.sha256), eq(captures.samplesKept, true)))
    .limit(1)
    .get();
  if (!others && c.samplesKept) deps.store.remove(c.sha256);
}

/** Deletes every capture of a rig the same way, before the rig row goes (its cascade would leave frames and files behind). */
export async function deleteRigCaptures(deps: CaptureDeps, rigId: number): Promise<void> {
  const rows = deps.db.select().from(captures).where(eq(captures.rigId, rigId)).all();
  for (const c of rows) await deleteCapture(deps, c);
}
