// What a run is made from, fixed when the run is created and stored with it (decode_jobs.inputs,
// call_runs.inputs as JSON): later edits of the capture's roles, the rig's answer timeout or the
// chosen field map do not change what an existing run's rows mean, and a run re-read after a
// restart behaves as it did when it was queued.
import { and, eq } from 'drizzle-orm';
import { dbOf, type Db, type Driver } from '../db/client';
import { fieldMaps, fieldMapVersions } from '../db/schema';
import { parseFieldMap, type FieldMap } from '../../shared/decoder/calls';
import { DEFAULT_TIMEOUT_SECONDS } from '../../shared/decoder/calls';
import { captureSettingsSchema, type CaptureSettings } from '../../shared/schemas';

export interface MapRef {
  mapId: number;
  version: number;
}

export interface RunInputs {
  /** the capture's channel roles and rates */
  capture: CaptureSettings;
  /** the field map version the call stage applies (versions never change once saved) */
  fieldMap: MapRef;
  /** the rig's answer timeout: a request waits this long before it counts as unanswered */
  answerTimeoutSeconds: number;
  /** the rig's CPU clock (Hz) for the budget line of timing races; snapshots older than the setting lack it */
  cpuHz?: number;
}

export interface ResolvedMap extends MapRef {
  map: FieldMap;
}

/** A stored map version, parsed; `version` null means the map's latest. */
export function loadMapVersion(handle: Db | Driver, mapId: number, version: number | null): ResolvedMap {
  const db = dbOf(handle);
  const v = version ?? db.select({ v: fieldMaps.latestVersion }).from(fieldMaps).where(eq(fieldMaps.id, mapId)).get()?.v;
  if (v === undefined) throw new Error(`field map ${mapId} no longer exists`);
  const row = db
    .select({ document: fieldMapVersions.document })
    .from(fieldMapVersions)
    .where(and(eq(fieldMapVersions.mapId, mapId), eq(fieldMapVersions.version, v)))
    .get();
  if (row === undefined) throw new Error(`field map ${mapId} has no version ${v}`);
  return { mapId, version: v, map: parseFieldMap(JSON.parse(row.document)) };
}

/**
 * A stored run's inputs. Rows written before snapshots existed carry only their settings (and a
 * call run its map): they read with the map given and the default timeout.
 */
export function parseRunInputs(stored: string | null, fallback: { settings: string; fieldMap: MapRef }): RunInputs {
  if (stored) {
    const raw = JSON.parse(stored) as RunInputs;
    return { capture: captureSettingsSchema.parse(raw.capture), fieldMap: raw.fieldMap, answerTimeoutSeconds: raw.answerTimeoutSeconds };
  }
  return { capture: captureSettingsSchema.parse(JSON.parse(fallback.settings)), fieldMap: fallback.fieldMap, answerTimeoutSeconds: DEFAULT_TIMEOUT_SECONDS };
}
