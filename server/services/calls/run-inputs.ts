// The inputs snapshot of a new run (server/runs/inputs.ts), read from the capture, its chosen
// field map and its rig at the moment the run is created.
import { eq } from 'drizzle-orm';
import type { Db } from '../../db/client';
import { captures, rigs } from '../../db/schema';
import type { CaptureSettings } from '../../../shared/schemas';
import type { MapRef, RunInputs } from '../../runs/inputs';
import { chosenMap } from './field-map-store';

/** The capture's rig settings a run uses: how long a request may wait before it counts as unanswered, and its CPU clock. */
function rigRunSettings(db: Db, captureId: number): { answerTimeoutSeconds: number; cpuHz: number } {
  const row = db
    .select({ ms: rigs.responseTimeoutMs, cpuHz: rigs.cpuHz })
    .from(captures)
    .innerJoin(rigs, eq(rigs.id, captures.rigId))
    .where(eq(captures.id, captureId))
    .get()!;
  return { answerTimeoutSeconds: row.ms / 1000, cpuHz: row.cpuHz };
}

/** A decode run: the capture's roles as given, its chosen map's version now, the rig's timeout and CPU clock now. */
export function decodeRunInputs(db: Db, captureId: number, capture: CaptureSettings): RunInputs {
  const m = chosenMap(db, captureId);
  return { capture, fieldMap: { mapId: m.mapId, version: m.version }, ...rigRunSettings(db, captureId) };
}

/** A call-only re-run over a decode run's frames: that run's roles, the newly chosen map, the rig's settings now. */
export function callRunInputs(db: Db, captureId: number, decodeRun: RunInputs, fieldMap: MapRef): RunInputs {
  return { capture: decodeRun.capture, fieldMap, ...rigRunSettings(db, captureId) };
}
