import { and, eq } from 'drizzle-orm';
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
  // the run rows are cleared on the driver's handle; Drizzle's delete runs on the same connection, so in this transaction
  deps.sqlite.transaction(() => {
    for (const { id } of jobIds) clearRunRows(deps.sqlite, id);
    deps.db.delete(captures).where(eq(captures.id, c.id)).run();
  })();
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
