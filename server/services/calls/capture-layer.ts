// A capture's call layer: which map it uses, which call run is visible, and choosing a new map.
import type { CaptureCallLayer, CaptureFieldMapInput, CallRunState } from '../../../shared/schemas';
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

/** The call run whose rows the lists read: the capture's current one, if it belongs to the visible decode run. */
export function visibleRun(m: CallsModule, captureId: number): VisibleRun | null {
  const row = m.sqlite
    .prepare(
      `select r.id as runId, r.decode_job_id as decodeJobId, r.map_id as mapId, r.map_version as mapVersion, coalesce(j.sample_period, 0) as samplePeriod
       from capture_call_layers l join call_runs r on r.id = l.current_run_id join captures c on c.id = l.capture_id
       join decode_jobs j on j.id = r.decode_job_id
       where l.capture_id = ? and r.decode_job_id = c.current_job_id and r.state = 'done'`,
    )
    .get(captureId) as VisibleRun | undefined;
  return row ?? null;
}

export function captureCallLayer(m: CallsModule, capture: CaptureRow): CaptureCallLayer {
  const chosen = m.sqlite.prepare('select map_id as mapId, map_version as mapVersion from capture_call_layers where capture_id = ?').get(capture.id) as
    | { mapId: number | null; mapVersion: number | null }
    | undefined;
  const resolved = chosenMap(m.sqlite, capture.id);
  const mapName = m.sqlite.prepare('select name from field_maps where id = ?').pluck().get(resolved.mapId) as string;
  const visible = visibleRun(m, capture.id);
  let current: CaptureCallLayer['current'] = null;
  if (visible) {
    const r = m.sqlite.prepare('select exchanges, files, finished_at as finishedAt from call_runs where id = ?').get(visible.runId) as {
      exchanges: number;
      files: number;
      finishedAt: number;
    };
    current = { runId: visible.runId, mapId: visible.mapId, mapVersion: visible.mapVersion, exchanges: r.exchanges, files: r.files, finishedAt: new Date(r.finishedAt).toISOString() };
  }
  const latest = m.sqlite.prepare('select id, state, error from call_runs where capture_id = ? order by id desc limit 1').get(capture.id) as
    | { id: number; state: CallRunState; error: string | null }
    | undefined;
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
    const has = m.sqlite.prepare('select 1 from field_map_versions where map_id = ? and version = ?').get(body.mapId, body.version);
    if (!has) throw notFound(`This field map has no version ${body.version}`);
  }
  m.sqlite
    .prepare(
      `insert into capture_call_layers (capture_id, map_id, map_version, current_run_id) values (?, ?, ?, null)
       on conflict(capture_id) do update set map_id = excluded.map_id, map_version = excluded.map_version`,
    )
    .run(capture.id, body.mapId, body.version ?? null);
  const decoded = m.sqlite
    .prepare("select j.id from captures c join decode_jobs j on j.id = c.current_job_id where c.id = ? and j.state = 'done'")
    .pluck()
    .get(capture.id) as number | undefined;
  if (decoded !== undefined && !m.jobs.isBusy(capture.id)) {
    const v = loadMapVersion(m.sqlite, body.mapId, body.version ?? null);
    queueCallRun(m, capture.id, decoded, { mapId: v.mapId, version: v.version });
  }
  return captureCallLayer(m, capture);
}

/** A call-only re-run over a decode run's frames, with its own snapshot. */
function queueCallRun(m: CallsModule, captureId: number, decodeJobId: number, fieldMap: { mapId: number; version: number }): void {
  const row = m.sqlite.prepare('select inputs, settings from decode_jobs where id = ?').get(decodeJobId) as { inputs: string | null; settings: string };
  const decodeInputs = parseRunInputs(row.inputs, { settings: row.settings, fieldMap });
  m.calls.enqueue(createCallRun(m.sqlite, captureId, decodeJobId, callRunInputs(m.sqlite, captureId, decodeInputs, fieldMap), 'queued'));
}

/**
 * A decode run took its map when it was queued; a map chosen while it was queued or running is
 * applied by a call-only re-run as soon as the decode is visible.
 */
export function applyMapChosenDuringDecode(m: CallsModule, captureId: number, decodeJobId: number): void {
  const row = m.sqlite.prepare('select inputs from decode_jobs where id = ?').pluck().get(decodeJobId) as string | null | undefined;
  if (!row) return;
  const used = (JSON.parse(row) as RunInputs).fieldMap;
  const now = chosenMap(m.sqlite, captureId);
  if (now.mapId !== used.mapId || now.version !== used.version) queueCallRun(m, captureId, decodeJobId, { mapId: now.mapId, version: now.version });
}
