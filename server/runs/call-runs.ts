// The life of a call run (one pass of the call stage over a decode run's frames): created with
// its own inputs snapshot, switched to visible when done. The rows it writes are in call-stage.ts;
// clearing replaced runs in sweep.ts.
import type Database from 'better-sqlite3';
import type { RunInputs } from './inputs';

export function createCallRun(db: Database.Database, captureId: number, decodeJobId: number, inputs: RunInputs, state: 'queued' | 'running'): number {
  return Number(
    db
      .prepare('insert into call_runs (capture_id, decode_job_id, map_id, map_version, inputs, state, created_at) values (?, ?, ?, ?, ?, ?, ?)')
      .run(captureId, decodeJobId, inputs.fieldMap.mapId, inputs.fieldMap.version, JSON.stringify(inputs), state, Date.now()).lastInsertRowid,
  );
}

/**
 * Makes a finished call run the visible one (inside the caller's transaction when it has one):
 * only when its decode run is still the capture's visible run.
 */
export function switchToCallRun(db: Database.Database, captureId: number, runId: number, counts: { exchanges: number; files: number }): boolean {
  const decodeJobId = db.prepare('select decode_job_id from call_runs where id = ?').pluck().get(runId) as number;
  const current = db.prepare('select current_job_id from captures where id = ?').pluck().get(captureId) as number | null | undefined;
  if (current !== decodeJobId) return false;
  db.prepare("update call_runs set state = 'done', exchanges = ?, files = ?, finished_at = ? where id = ?").run(counts.exchanges, counts.files, Date.now(), runId);
  db.prepare(
    'insert into capture_call_layers (capture_id, map_id, map_version, current_run_id) values (?, null, null, ?) on conflict(capture_id) do update set current_run_id = excluded.current_run_id',
  ).run(captureId, runId);
  return true;
}
