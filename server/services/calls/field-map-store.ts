// The rig's field maps as the call layer reads them: the built-in map (created on first use,
// a new version when the shipped document changes) and each capture's chosen map.
// Raw better-sqlite3 for now (D moves it to Drizzle).
import type Database from 'better-sqlite3';
import { CPM_ENVELOPE_DOCUMENT } from '../../../shared/decoder/calls/cpm-envelope';
import { loadMapVersion, type ResolvedMap } from '../../runs/inputs';

export { loadMapVersion, type ResolvedMap };

export const BUILT_IN_MAP_NAME = 'CP/M call envelope';

/**
 * The rig's built-in map row, created on first use; when the shipped document changed since,
 * the new one becomes the next version (older versions stay, captures pinned to them keep them).
 */
export function ensureBuiltInMap(db: Database.Database, rigId: number): number {
  const doc = JSON.stringify(CPM_ENVELOPE_DOCUMENT);
  // the usual case reads only; a write takes the lock first (IMMEDIATE), so the server and a
  // decode worker creating the row at the same moment wait for each other instead of failing
  const existing = db
    .prepare(
      `select f.id from field_maps f join field_map_versions v on v.map_id = f.id and v.version = f.latest_version
       where f.rig_id = ? and f.built_in = 1 and v.document = ? order by f.id limit 1`,
    )
    .pluck()
    .get(rigId, doc) as number | undefined;
  if (existing !== undefined) return existing;
  return db.transaction(() => {
    const row = db.prepare('select id, latest_version as v from field_maps where rig_id = ? and built_in = 1 order by id limit 1').get(rigId) as
      | { id: number; v: number }
      | undefined;
    const now = Date.now();
    if (!row) {
      const id = Number(
        db
          .prepare('insert into field_maps (rig_id, name, built_in, latest_version, created_at, updated_at) values (?, ?, 1, 1, ?, ?)')
          .run(rigId, BUILT_IN_MAP_NAME, now, now).lastInsertRowid,
      );
      db.prepare('insert into field_map_versions (map_id, version, document, created_by, created_at) values (?, 1, ?, null, ?)').run(id, doc, now);
      return id;
    }
    const latest = db.prepare('select document from field_map_versions where map_id = ? and version = ?').pluck().get(row.id, row.v) as string | undefined;
    if (latest !== doc) {
      db.prepare('insert into field_map_versions (map_id, version, document, created_by, created_at) values (?, ?, ?, null, ?)').run(row.id, row.v + 1, doc, now);
      db.prepare('update field_maps set latest_version = ?, updated_at = ? where id = ?').run(row.v + 1, now, row.id);
    }
    return row.id;
  }).immediate();
}

/** The capture's chosen map (the rig's built-in when none was chosen or the chosen one is gone). */
export function chosenMap(db: Database.Database, captureId: number): ResolvedMap {
  const choice = db.prepare('select map_id as mapId, map_version as mapVersion from capture_call_layers where capture_id = ?').get(captureId) as
    | { mapId: number | null; mapVersion: number | null }
    | undefined;
  if (choice?.mapId != null) {
    const exists = db.prepare('select 1 from field_maps where id = ?').get(choice.mapId);
    if (exists) return loadMapVersion(db, choice.mapId, choice.mapVersion);
  }
  const rigId = db.prepare('select rig_id from captures where id = ?').pluck().get(captureId) as number;
  return loadMapVersion(db, ensureBuiltInMap(db, rigId), null);
}

