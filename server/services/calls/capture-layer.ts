// A capture's call layer: which map it uses, which call run is visible, and choosing a new map.
import { and, desc, eq, sql } from 'drizzle-orm';
import type { CaptureCallLayer, CaptureFieldMapInput } from '../../../shared/schemas';
import { prepared } from '../../db/prepared';
import { callRuns, captureCallLayers, captures, decodeJobs, fieldMaps, fieldMapVersions } from '../../db/schema';
import { createCallRun } from '../../runs/call-runs';
import { parseRunInputs, type RunInputs } from '../../runs/inputs';
import { chosenMap, loadMapVersion } from './field-map-store';
import { callRunInputs } from './run-inputs';
import { notFound } from '../../http/errors';
import type { CaptureRow } from '../captures/rows';
import { findMap } from './field-maps';
import type { CallsModule } from './module';

export interface VisibleRun {
  runId: number;
  decodeJobId: number;
  mapId: number;
  mapVersion: number;
  samplePeriod: number;
}

const ph = sql.placeholder;

/** The call run whose rows the lists read: the capture's current one, if it belongs to the visible decode run. */
export function visibleRun(m: Pick<CallsModule, 'db'>, captureId: number): VisibleRun | null {
  const row = prepared(m.db, 'visible call run', () =>
    m.db
      .select({
        runId: callRuns.id,
        decodeJobId: callRuns.decodeJobId,
        mapId: callRuns.mapId,
        mapVersion: callRuns.mapVersion,
        samplePeriod: sql<number>`coalesce(${decodeJobs.samplePeriod}, 0)`,
      })
      .from(captureCallLayers)
      .innerJoin(callRuns, eq(callRuns.id, captureCallLayers.currentRunId))
      .innerJoin(captures, eq(captures.id, captureCallLayers.captureId))
      .innerJoin(decodeJobs, eq(decodeJobs.id, callRuns.decodeJobId))
      .where(and(eq(captureCallLayers.captureId, ph('captureId')), eq(callRuns.decodeJobId, captures.currentJobId), sql`${callRuns.state} = 'done'`))
      .prepare(),
  ).get({ captureId });
  return row ?? null;
}

/** the name of a field map */
export const mapNameOf = (m: Pick<CallsModule, 'db'>, mapId: number): string | undefined =>
  prepared(m.db, 'field map name', () => m.db.select({ name: fieldMaps.name }).from(fieldMaps).where(eq(fieldMaps.id, ph('mapId'))).prepare()).get({ mapId })?.name;

export function captureCallLayer(m: CallsModule, capture: CaptureRow): CaptureCallLayer {
  const chosen = prepared(m.db, 'chosen map', () =>
    m.db
      .select({ mapId: captureCallLayers.mapId, mapVersion: captureCallLayers.mapVersion })
      .from(captureCallLayers)
      .where(eq(captureCallLayers.captureId, ph('captureId')))
      .prepare(),
  ).get({ captureId: capture.id });
  const resolved = chosenMap(m.db, capture.id);
  const mapName = mapNameOf(m, resolved.mapId) as string;
  const visible = visibleRun(m, capture.id);
  let current: CaptureCallLayer['current'] = null;
  if (visible) {
    const r = prepared(m.db, 'call run totals', () =>
      m.db
        .select({ exchanges: callRuns.exchanges, files: callRuns.files, finishedAt: callRuns.finishedAt })
        .from(callRuns)
        .where(eq(callRuns.id, ph('runId')))
        .prepare(),
    ).get({ runId: visible.runId })!;
    current = {
      runId: visible.runId,
      mapId: visible.mapId,
      mapVersion: visible.mapVersion,
      exchanges: r.exchanges,
      files: r.files,
      finishedAt: (r.finishedAt ?? new Date(0)).toISOString(),
    };
  }
  const latest = prepared(m.db, 'latest call run', () =>
    m.db
      .select({ id: callRuns.id, state: callRuns.state, error: callRuns.error })
      .from(callRuns)
      .where(eq(callRuns.captureId, ph('captureId')))
      .orderBy(desc(callRuns.id))
      .limit(1)
      .prepare(),
  ).get({ captureId: capture.id });
  const pending = latest && latest.id !== visible?.runId && (latest.state !== 'done') ? { runId: latest.id, state: latest.state, error: latest.error } : null;
  return {
    captureId: capture.id,
    mapId: resolved.mapId,
    mapName,
    mapVersion: chosen?.mapId === resolved.mapId ? (chosen?.mapVersion ?? null) : null,
    current,
    pending,
  };
}

/**
 * Chooses the capture's map. When the capture is decoded (and no decode is under way, which
 * would apply the choice itself), the call layer runs again; the old results stay visible until then.
 */
export function chooseCaptureMap(m: CallsModule, rigId: number, capture: CaptureRow, body: CaptureFieldMapInput): CaptureCallLayer {
  findMap(m, rigId, body.mapId);
  if (body.version !== undefined) {
    const has = m.db
      .select({ id: fieldMapVersions.id })
      .from(fieldMapVersions)
      .where(and(eq(fieldMapVersions.mapId, body.mapId), eq(fieldMapVersions.version, body.version)))
      .get();
    if (!has) throw notFound(`This field map has no version ${body.version}`);
  }
  m.db
    .insert(captureCallLayers)
    .values({ captureId: capture.id, mapId: body.mapId, mapVersion: body.version ?? null, currentRunId: null })
    .onConflictDoUpdate({ target: captureCallLayers.captureId, set: { mapId: sql`excluded.map_id`, mapVersion: sql`excluded.map_version` } })
    .run();
  const decoded = m.db
    .select({ id: decodeJobs.id })
    .from(captures)
    .innerJoin(decodeJobs, eq(decodeJobs.id, captures.currentJobId))
    .where(and(eq(captures.id, capture.id), eq(decodeJobs.state, 'done')))
    .get()?.id;
  if (decoded !== undefined && !m.jobs.isBusy(capture.id)) {
    const v = loadMapVersion(m.db, body.mapId, body.version ?? null);
    queueCallRun(m, capture.id, decoded, { mapId: v.mapId, version: v.version });
  }
  return captureCallLayer(m, capture);
}

/** a decode run's inputs snapshot (JSON) and settings */
const runInputsOf = (m: Pick<CallsModule, 'db'>, decodeJobId: number) =>
  m.db.select({ inputs: decodeJobs.inputs, settings: decodeJobs.settings }).from(decodeJobs).where(eq(decodeJobs.id, decodeJobId)).get();

/** A call-only re-run over a decode run's frames, with its own snapshot. */
function queueCallRun(m: CallsModule, captureId: number, decodeJobId: number, fieldMap: { mapId: number; version: number }): void {
  const row = runInputsOf(m, decodeJobId)!;
  const decodeInputs = parseRunInputs(row.inputs, { settings: row.settings, fieldMap });
  m.calls.enqueue(createCallRun(m.db, captureId, decodeJobId, callRunInputs(m.db, captureId, decodeInputs, fieldMap), 'queued'));
}

/**
 * A decode run took its map when it was queued; a map chosen while it was queued or running is
 * applied by a call-only re-run as soon as the decode is visible.
 */
export function applyMapChosenDuringDecode(m: CallsModule, captureId: number, decodeJobId: number): void {
  const inputs = runInputsOf(m, decodeJobId)?.inputs;
  if (!inputs) return;
  const used = (JSON.parse(inputs) as RunInputs).fieldMap;
  const now = chosenMap(m.db, captureId);
  if (now.mapId !== used.mapId || now.version !== used.version) queueCallRun(m, captureId, decodeJobId, { mapId: now.mapId, version: now.version });
}
