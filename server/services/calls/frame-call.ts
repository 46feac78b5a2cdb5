// The call decode of one frame for the inspector, with field spans counted from the frame's first octet.
import { decodeFrameCall, callLayerRoles } from '../../../shared/decoder/calls';
import type { FrameCall } from '../../../shared/schemas';
import { captureSettingsSchema } from '../../../shared/schemas';
import { frameFromRow, storedFrame } from '../../runs/stored-frame';
import { chosenMap, loadMapVersion } from './field-map-store';
import { notFound } from '../../http/errors';
import type { CaptureRow } from '../captures/rows';
import { visibleRun } from './capture-layer';
import { findExchange, stationNames, toExchangeRow } from './exchanges';
import type { CallsModule } from './module';

export function frameCall(m: CallsModule, capture: CaptureRow, frameId: number): FrameCall {
  const jobId = capture.currentJobId;
  const row = jobId === null ? undefined : storedFrame(m.db, jobId, frameId);
  if (!row || jobId === null) throw notFound(`No frame with id ${frameId} in this capture's decoded frames`);
  const frame = frameFromRow(row);
  const run = visibleRun(m, capture.id);
  // the map of the visible results, so the inspector agrees with the exchange list
  const resolved = run ? loadMapVersion(m.sqlite, run.mapId, run.mapVersion) : chosenMap(m.sqlite, capture.id);
  const mapName = m.sqlite.prepare('select name from field_maps where id = ?').pluck().get(resolved.mapId) as string;
  const exchangeId = run
    ? ((m.sqlite.prepare('select exchange_id from exchange_frames where run_id = ? and frame_id = ? limit 1').pluck().get(run.runId, frameId) as number | undefined) ?? null)
    : null;
  // the whole exchange, so the inspector links its request, retries and answers without another request
  const exchangeRow = exchangeId === null || !run ? undefined : findExchange(m, run.runId, exchangeId);
  const exchange = exchangeRow ? toExchangeRow(exchangeRow, stationNames(m, capture.id)) : null;
  const base = { frameId, map: { id: resolved.mapId, name: mapName, version: resolved.version }, exchangeId, exchange };
  const settingsJson = m.sqlite.prepare('select settings from decode_jobs where id = ?').pluck().get(jobId) as string;
  const { links } = callLayerRoles(captureSettingsSchema.parse(JSON.parse(settingsJson)));
  const role = links.find((l) => l.link === frame.link);
  if (!role) return { ...base, reason: 'The link of this frame has no direction (to or from the server) in the capture settings', call: null };
  const d = frame.decode;
  let reason: string | null = null;
  if (frame.status !== 'ok') reason = `The frame is damaged (${frame.status}); only good frames carry a call`;
  else if (!d) reason = 'The frame is too short for address and control';
  else if (d.kind !== 'I' && d.command !== 'UI') reason = `${d.kind} frames (${d.command}) carry no call`;
  else if (d.infoLength === 0) reason = 'The frame has no information field';
  const direction = role.direction === 'to-server' ? 'request' : 'response';
  const call = reason === null ? decodeFrameCall(resolved.map, frame, direction) : null;
  if (!call || !d) return { ...base, reason: reason ?? 'The frame carries no call', call: null };
  return {
    ...base,
    reason: null,
    call: {
      direction: call.direction,
      layout: call.layout,
      callCode: call.callCode,
      callName: call.callName,
      tag: call.tag,
      user: call.user,
      fileName: call.fileName,
      recordNumber: call.recordNumber,
      status: call.status,
      statusMeaning: call.statusMeaning,
      truncated: call.truncated,
      unexplained: call.unexplained,
      problems: call.problems,
      infoOffset: d.infoOffset,
      fields: call.fields.map((f) => ({
        id: f.id,
        name: f.name,
        type: f.type,
        role: f.role,
        meaning: f.meaning,
        frameOffset: d.infoOffset + f.offset,
        length: f.length,
        available: f.available,
        truncated: f.truncated,
        absent: f.absent,
        value: f.value,
        text: f.text,
        valueName: f.valueName,
        bits: f.bits,
        attributes: f.attributes ? { ...f.attributes } : null,
        display: f.display,
      })),
    },
  };
}
