import { createHash } from 'node:crypto';
import { CPM_ENVELOPE_DOCUMENT } from '../../shared/decoder/calls';
import type { FlaglineApp } from '../../server/index';
import { ensureBuiltInMap } from '../../server/services/calls/field-map-store';

/**
 * Call-layer scenery for a capture seeded without a worker: the rig's built-in map, a user map
 * copied from it, and a visible call run holding one recovered file of two records (the second
 * missing). Tests that need real exchanges use the demo captures instead.
 */
export function seedCallLayer(app: FlaglineApp, rigId: number, captureId: number, userId: number): { builtInMapId: number; mapId: number; fileId: number } {
  const sqlite = app.db.sqlite;
  const builtInMapId = ensureBuiltInMap(app.db.db, rigId);
  const now = Date.now();
  const mapId = Number(
    sqlite.prepare("insert into field_maps (rig_id, name, built_in, latest_version, created_at, updated_at) values (?, 'Bench copy', 0, 1, ?, ?)").run(rigId, now, now)
      .lastInsertRowid,
  );
  sqlite
    .prepare('insert into field_map_versions (map_id, version, document, created_by, created_at) values (?, 1, ?, ?, ?)')
    .run(mapId, JSON.stringify({ ...CPM_ENVELOPE_DOCUMENT, name: 'Bench copy', version: 1 }), userId, now);
  const jobId = sqlite.prepare('select current_job_id from captures where id = ?').pluck().get(captureId) as number;
  const runId = Number(
    sqlite
      .prepare("insert into call_runs (capture_id, decode_job_id, map_id, map_version, state, files, created_at, finished_at) values (?, ?, ?, 1, 'done', 1, ?, ?)")
      .run(captureId, jobId, builtInMapId, now, now).lastInsertRowid,
  );
  sqlite.prepare('insert into capture_call_layers (capture_id, map_id, map_version, current_run_id) values (?, null, null, ?)').run(captureId, runId);
  const bytes = Buffer.alloc(256, 0x41);
  const fileId = Number(
    sqlite
      .prepare(
        `insert into recovered_files (run_id, capture_id, key, name, kind, user, stations, record_count, end_known, bytes, sha256, coverage, conflicts, exchange_ids)
         values (?, ?, '0:BENCH.TXT', 'BENCH.TXT', 'file', 0, '[33]', 2, 1, ?, ?, 'sm', '[]', '[]')`,
      )
      .run(runId, captureId, bytes, createHash('sha256').update(bytes).digest('hex')).lastInsertRowid,
  );
  return { builtInMapId, mapId, fileId };
}
