// Clearing the rows of runs nobody reads any more: replaced, failed, cancelled or interrupted
// decode runs and call runs. Short transactions, so readers and a running worker are not held up.
import type Database from 'better-sqlite3';

/**
 * Deletes a run's rows in batches (each its own short transaction, so readers and the worker
 * are not held up long), then marks the run as cleared. Returns false while rows remain when
 * `maxBatches` ran out, so a caller can yield between calls.
 */
export function clearRunRows(db: Database.Database, jobId: number, maxBatches = Infinity, batch = 5000): boolean {
  const ids = db.prepare('select id from frames where job_id = ? order by id limit ?').pluck();
  // only entries that were added may be deleted: a 'delete' of an absent entry corrupts an FTS5 index
  const indexedTo = (db.prepare('select search_indexed_to from decode_jobs where id = ?').pluck().get(jobId) as number | undefined) ?? 0;
  const dropSearch = db.prepare(
    "insert into frame_search (frame_search, rowid, hex, text) select 'delete', id, hex, text from frames where job_id = ? and id between ? and min(?, ?)",
  );
  const dropFrames = db.prepare('delete from frames where job_id = ? and id between ? and ?');
  const step = db.transaction((from: number, to: number) => {
    if (from <= indexedTo) dropSearch.run(jobId, from, to, indexedTo);
    dropFrames.run(jobId, from, to);
  });
  for (let k = 0; k < maxBatches; k++) {
    const found = ids.all(jobId, batch) as number[];
    if (found.length === 0) {
      db.transaction(() => {
        db.prepare('delete from line_events where job_id = ?').run(jobId);
        db.prepare('delete from seek_points where job_id = ?').run(jobId);
        db.prepare('delete from fault_rows where job_id = ?').run(jobId);
        db.prepare('delete from fault_summaries where job_id = ?').run(jobId);
        // the call layer's rows over these frames go with them
        const callRuns = 'select id from call_runs where decode_job_id = ?';
        db.prepare(`delete from exchange_frames where run_id in (${callRuns})`).run(jobId);
        db.prepare(`delete from exchanges where run_id in (${callRuns})`).run(jobId);
        db.prepare(`delete from recovered_files where run_id in (${callRuns})`).run(jobId);
        db.prepare('update call_runs set rows_cleared = 1 where decode_job_id = ?').run(jobId);
        db.prepare('update decode_jobs set rows_cleared = 1 where id = ?').run(jobId);
      }).immediate();
      return true;
    }
    step.immediate(found[0], found[found.length - 1]);
  }
  return false;
}

/** Deletes a call run's rows and marks it cleared. */
export function clearCallRunRows(db: Database.Database, runId: number): void {
  db.transaction(() => {
    db.prepare('delete from exchange_frames where run_id = ?').run(runId);
    db.prepare('delete from exchanges where run_id = ?').run(runId);
    db.prepare('delete from recovered_files where run_id = ?').run(runId);
    db.prepare('update call_runs set rows_cleared = 1 where id = ?').run(runId);
  }).immediate();
}

/** Call runs whose rows nobody reads: finished and not their capture's visible run. */
export function staleCallRuns(db: Database.Database): number[] {
  return db
    .prepare(
      `select r.id from call_runs r left join capture_call_layers l on l.current_run_id = r.id
       where r.rows_cleared = 0 and l.capture_id is null
         and (r.state in ('done', 'failed')
              or exists (select 1 from decode_jobs j where j.id = r.decode_job_id and j.state in ('failed', 'cancelled', 'interrupted')))
       order by r.id`,
    )
    .pluck()
    .all() as number[];
}

/** After a crash or a deleted capture: runs left queued or running fail, rows of unknown runs go. */
export function recoverCallRuns(db: Database.Database): void {
  db.prepare("update call_runs set state = 'failed', error = 'The server stopped during this run; choose the map again.', finished_at = ? where state in ('queued', 'running')").run(Date.now());
  for (const id of staleCallRuns(db)) clearCallRunRows(db, id);
  for (const table of ['exchanges', 'exchange_frames', 'recovered_files']) {
    db.prepare(`delete from ${table} where run_id not in (select id from call_runs)`).run();
  }
}


/** decode runs whose rows are not needed: finished, not cleared, and not the visible run of their capture */
export function staleRuns(db: Database.Database): number[] {
  return db
    .prepare(
      `select j.id from decode_jobs j left join captures c on c.current_job_id = j.id
       where j.state not in ('queued', 'running') and j.rows_cleared = 0 and c.id is null order by j.id`,
    )
    .pluck()
    .all() as number[];
}
