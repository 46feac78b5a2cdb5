import { eq } from 'drizzle-orm';
import { captures } from '../../db/schema';
import { clearRunRows } from '../../runs/sweep';
import type { CaptureDeps } from './deps';
import type { CaptureRow } from './rows';

/**
 * Deletes a capture with its runs' rows, its jobs and — when no other capture holds the same
 * content — its file. A running decode is stopped first so it cannot write after the cleanup.
 */
export async function deleteCapture(deps: CaptureDeps, c: CaptureRow): Promise<void> {
  await deps.jobs.stop(c.id);
  const jobIds = deps.sqlite.prepare('select id from decode_jobs where capture_id = ?').pluck().all(c.id) as number[];
  deps.sqlite.transaction(() => {
    for (const id of jobIds) clearRunRows(deps.sqlite, id);
    deps.sqlite.prepare('delete from captures where id = ?').run(c.id);
  })();
  // a capture decoded in the browser shares the hash of its original but holds no file
  const others = deps.sqlite.prepare('select 1 from captures where sha256 = ? and samples_kept = 1 limit 1').get(c.sha256);
  if (!others && c.samplesKept) deps.store.remove(c.sha256);
}

/** Deletes every capture of a rig the same way, before the rig row goes (its cascade would leave frames and files behind). */
export async function deleteRigCaptures(deps: CaptureDeps, rigId: number): Promise<void> {
  const rows = deps.db.select().from(captures).where(eq(captures.rigId, rigId)).all();
  for (const c of rows) await deleteCapture(deps, c);
}
