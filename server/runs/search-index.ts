// The frame search index (FTS5 trigram table frame_search, contentless over frames.hex/text):
// the one place with raw SQL for it, since Drizzle cannot express FTS5 tables or their commands.
import type Database from 'better-sqlite3';

/**
 * Adds a finished run's frames to the trigram search index, in chunks of ids (each a short
 * transaction that also records how far the index reaches), so the cleanup of a run stopped
 * half way removes exactly the entries that exist. FTS5 builds much faster from whole chunks
 * than row by row during the decode.
 */
export function indexSearch(db: Database.Database, jobId: number, chunk = 200_000, onChunk?: () => void): void {
  const range = db.prepare('select min(id) as lo, max(id) as hi from frames where job_id = ?').get(jobId) as { lo: number | null; hi: number | null };
  if (range.lo === null || range.hi === null) return;
  const add = db.prepare('insert into frame_search (rowid, hex, text) select id, hex, text from frames where job_id = ? and id between ? and ?');
  const mark = db.prepare('update decode_jobs set search_indexed_to = ? where id = ?');
  const step = db.transaction((from: number, to: number) => {
    add.run(jobId, from, to);
    mark.run(to, jobId);
  });
  for (let from = range.lo; from <= range.hi; from += chunk) {
    step.immediate(from, Math.min(range.hi, from + chunk - 1));
    onChunk?.();
  }
}


/** Removes the search entries of a run's frames with ids from..to (all of them indexed). */
export function dropSearchEntries(db: Database.Database, jobId: number, from: number, to: number): void {
  db.prepare("insert into frame_search (frame_search, rowid, hex, text) select 'delete', id, hex, text from frames where job_id = ? and id between ? and ?").run(
    jobId,
    from,
    to,
  );
}
