// The rig's field maps as the call layer reads them: the built-in map (created on first use,
// a new version when the shipped document changes) and each capture's chosen map.
import { and, eq } from 'drizzle-orm';
import type { Db } from '../../db/client';
import { captureCallLayers, captures, fieldMaps, fieldMapVersions } from '../../db/schema';
import { CPM_ENVELOPE_DOCUMENT } from '../../../shared/decoder/calls';
import { loadMapVersion, type ResolvedMap } from '../../runs/inputs';

export { loadMapVersion, type ResolvedMap };

export const BUILT_IN_MAP_NAME = 'CP/M call envelope';

/**
 * The rig's built-in map row, created on first use; when the shipped document changed since,
 * the new one becomes the next version (older versions stay, captures pinned to them keep them).
 */
export function ensureBuiltInMap(db: Db, rigId: number): number {
  const doc = JSON.stringify(CPM_ENVELOPE_DOCUMENT);
  // the usual case reads only; a write takes the lock first (IMMEDIATE), so the server and a
  // decode worker creating the row at the same moment wait for each other instead of failing
  const existing = db
    .select({ id: fieldMaps.id })
    .from(fieldMaps)
    .innerJoin(fieldMapVersions, and(eq(fieldMapVersions.mapId, fieldMaps.id), eq(fieldMapVersions.version, fieldMaps.latestVersion)))
    .where(and(eq(fieldMaps.rigId, rigId), eq(fieldMaps.builtIn, true), eq(fieldMapVersions.document, doc)))
    .orderBy(fieldMaps.id)
    .limit(1)
    .get();
  if (existing !== undefined) return existing.id;
  return db.transaction(
    (tx) => {
      const row = tx
        .select({ id: fieldMaps.id, v: fieldMaps.latestVersion })
        .from(fieldMaps)
        .where(and(eq(fieldMaps.rigId, rigId), eq(fieldMaps.builtIn, true)))
        .orderBy(fieldMaps.id)
        .limit(1)
        .get();
      const now = new Date();
      if (!row) {
        const id = tx
          .insert(fieldMaps)
          .values({ rigId, name: BUILT_IN_MAP_NAME, builtIn: true, latestVersion: 1, createdAt: now, updatedAt: now })
          .returning({ id: fieldMaps.id })
          .get().id;
        tx.insert(fieldMapVersions).values({ mapId: id, version: 1, document: doc, createdBy: null, createdAt: now }).run();
        return id;
      }
      const latest = tx
        .select({ document: fieldMapVersions.document })
        .from(fieldMapVersions)
        .where(and(eq(fieldMapVersions.mapId, row.id), eq(fieldMapVersions.version, row.v)))
        .get();
      if (latest?.document !== doc) {
        tx.insert(fieldMapVersions).values({ mapId: row.id, version: row.v + 1, document: doc, createdBy: null, createdAt: now }).run();
        tx.update(fieldMaps).set({ latestVersion: row.v + 1, updatedAt: now }).where(eq(fieldMaps.id, row.id)).run();
      }
      return row.id;
    },
    { behavior: 'immediate' },
  );
}

/** The capture's chosen map (the rig's built-in when none was chosen or the chosen one is gone). */
export function chosenMap(db: Db, captureId: number): ResolvedMap {
  const choice = db
    .select({ mapId: captureCallLayers.mapId, mapVersion: captureCallLayers.mapVersion })
    .from(captureCallLayers)
    .where(eq(captureCallLayers.captureId, captureId))
    .get();
  if (choice?.mapId != null) {
    const exists = db.select({ id: fieldMaps.id }).from(fieldMaps).where(eq(fieldMaps.id, choice.mapId)).get();
    if (exists) return loadMapVersion(db, choice.mapId, choice.mapVersion);
  }
  const capture = db.select({ rigId: captures.rigId }).from(captures).where(eq(captures.id, captureId)).get()!;
  return loadMapVersion(db, ensureBuiltInMap(db, capture.rigId), null);
}
