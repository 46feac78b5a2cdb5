// The frame search index (FTS5 trigram table frame_search, external content over frames.hex/text):
// the one place with raw SQL for it, since Drizzle cannot express FTS5 tables or their commands.
import type Database from 'better-sqlite3';
import { sql, type Placeholder, type SQL } from 'drizzle-orm';

/**
 * frames per index transaction: FTS5 builds much faster from whole chunks than row by row, and
 * a chunk holds the write lock for a fraction of a second only (the run is already visible)
 */
export const SEARCH_CHUNK = 50_000;

export interface IndexSearchOptions {
  /** the run's frame ids to index (default: all of the run's frames) */
  range?: { lo: number; hi: number };
  chunk?: number;
  /** stop after this many chunks (the server's resume after a crash yields between them) */
  maxChunks?: number;
  onChunk?: () => void;
}

/**
 * Adds a run's frames to the trigram search index, in chunks of ids (each a short transaction
 * that also records how far the index reaches), so the cleanup of a run stopped half way removes
 * exactly the entries that exist. A decode run is indexed after it became visible; until then
 * the frames above search_indexed_to up to last_frame_id are searched directly (searchTail).
 * Returns whether the index reaches the end of the range.
 */
export function indexSearch(db: Database.Database, jobId: number, opts: IndexSearchOptions = {}): boolean {
  const range = opts.range ?? (db.prepare('select min(id) as lo, max(id) as hi from frames where job_id = ?').get(jobId) as { lo: number | null; hi: number | null });
  if (range.lo === null || range.hi === null) return true;
  const chunk = opts.chunk ?? SEARCH_CHUNK;
  const add = db.prepare('insert into frame_search (rowid, hex, text) select id, hex, text from frames where job_id = ? and id between ? and ?');
  const mark = db.prepare('update decode_jobs set search_indexed_to = ?, last_frame_id = max(last_frame_id, ?) where id = ?');
  const step = db.transaction((from: number, to: number) => {
    add.run(jobId, from, to);
    mark.run(to, range.hi, jobId);
  });
  let chunks = 0;
  for (let from = range.lo; from <= range.hi; from += chunk) {
    if (chunks++ === opts.maxChunks) return false;
    step.immediate(from, Math.min(range.hi, from + chunk - 1));
    opts.onChunk?.();
  }
  return true;
}

/**
 * Visible runs whose search index is not complete (a worker stopped while building it, say),
 * with the frame ids still to index.
 */
export function unindexedRuns(db: Database.Database): { jobId: number; lo: number; hi: number }[] {
  return db
    .prepare(
      `select j.id as jobId, j.search_indexed_to + 1 as lo, j.last_frame_id as hi from decode_jobs j join captures c on c.current_job_id = j.id
       where j.search_indexed_to < j.last_frame_id order by j.id`,
    )
    .all() as { jobId: number; lo: number; hi: number }[];
}

/** Removes the search entries of a run's frames with ids from..to (all of them indexed). */
export function dropSearchEntries(db: Database.Database, jobId: number, from: number, to: number): void {
  db.prepare("insert into frame_search (frame_search, rowid, hex, text) select 'delete', id, hex, text from frames where job_id = ? and id between ? and ?").run(
    jobId,
    from,
    to,
  );
}

// The query side: predicates over frame_search as Drizzle fragments, for the readers to compose.

const SEARCH_COLUMNS = { hex: sql.raw('hex'), text: sql.raw('text') } as const;
/** the two indexed columns of frames: hex (address..info as lower-case hex) and text (info as ASCII) */
export type SearchColumn = keyof typeof SEARCH_COLUMNS;

/**
 * Frames of visible runs that are not in the index yet: a decode run becomes visible before its
 * index is built, and until the index reaches last_frame_id the rest of its frames are handed
 * to the search as candidates. Empty once every index is complete. The cross join and the unary
 * + keep the plan on decode_jobs (a few rows) and the frames' id range.
 */
const NOT_YET_INDEXED = sql.raw(
  'select t.id from decode_jobs j cross join frames t where j.search_indexed_to < j.last_frame_id and t.id > j.search_indexed_to and t.id <= j.last_frame_id and +t.job_id = j.id',
);

/**
 * Contract: a subquery of frame ids (frames.id) holding every frame whose `column` contains the
 * LIKE `pattern` (`%…%`, no escapes, ≥ 3 literal characters, or the index answers more than
 * that): the index's hits plus the frames it does not cover yet, so a caller still tests its own
 * predicate on each row; `limit` caps the ids.
 */
export function searchHitIds(column: SearchColumn, pattern: string | Placeholder, limit?: number): SQL<number> {
  const capped = limit === undefined ? sql`` : sql` limit ${sql.raw(String(Math.trunc(limit)))}`;
  return sql<number>`select rowid from frame_search where ${SEARCH_COLUMNS[column]} like ${pattern} union all ${NOT_YET_INDEXED}${capped}`;
}

/**
 * Contract: a one-row query of `n`, the number of candidates of `pattern` in `column` (index hits
 * and frames not indexed yet) counted up to `cap`: cheap whatever the pattern, to tell a rare
 * term from a common one. While a long run is still being indexed its candidates are many, so a
 * search then walks the frames in time order instead.
 */
export function searchHitCount(column: SearchColumn, pattern: string | Placeholder, cap: number): SQL<{ n: number }> {
  return sql<{ n: number }>`select count(*) as n from (${searchHitIds(column, pattern, cap)})`;
}
