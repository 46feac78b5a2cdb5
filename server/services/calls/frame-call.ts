// The call decode of one frame for the inspector, with field spans counted from the frame's first octet.
import { and, eq, sql } from 'drizzle-orm';
import { decodeFrameCall, callLayerRoles } from '../../../shared/decoder/calls';
import type { FrameCall } from '../../../shared/schemas';
import { captureSettingsSchema } from '../../../shared/schemas';
import { frameFromRow, storedFrame } from '../../runs/stored-frame';
import { chosenMap, loadMapVersion } from './field-map-store';
import { prepared } from '../../db/prepared';
import { decodeJobs, exchangeFrames } from '../../db/schema';
import { notFound } from '../../http/errors';
import type { CaptureRow } from '../captures/rows';
import { mapNameOf, visibleRun } from './capture-layer';
import { findExchange, stationNames, toExchangeRow } from './exchanges';
import type { CallsModule } from './module';

const ph = sql.placeholder;

/** the exchange a frame belongs to in a call run, by the (run, frame) index */
const exchangeOfFrame = (m: Pick<CallsModule, 'db'>, runId: number, frameId: number): number | undefined =>
  prepared(m.db, 'exchange of a frame', () =>
    m.db
      .select({ exchangeId: exchangeFrames.exchangeId })
      .from(exchangeFrames)
      .where(and(eq(exchangeFrames.runId, ph('runId')), eq(exchangeFrames.frameId, ph('frameId'))))
      .limit(1)
      .prepare(),
  ).get({ runId, frameId })?.exchangeId;

/** the settings a decode run used (JSON text), null for a run without them */
const jobSettings = (m: Pick<CallsModule, 'db'>, jobId: number): string | null =>
  prepared(m.db, 'decode job settings', () => m.db.select({ settings: decodeJobs.settings }).from(decodeJobs).where(eq(decodeJobs.id, ph('jobId'))).prepare()).get({ jobId })
    ?.settings ?? null;

export function frameCall(m: CallsModule, capture: CaptureRow, frameId: number): FrameCall {
  const jobId = capture.currentJobId;
  const row = jobId === null ? undefined : storedFrame(m.db, jobId, frameId);
  if (!row || jobId === null) throw notFound(`No frame with id ${frameId} in this capture's decoded frames`);
  const frame = frameFromRow(row);
  const run = visibleRun(m, capture.id);
  // the map of the visible results, so the inspector agrees with the exchange list
  const resolved = run ? loadMapVersion(m.db, run.mapId, run.mapVersion) : chosenMap(m.db, capture.id);
  const mapName = mapNameOf(m, resolved.mapId) ?? '';
  const exchangeId = run ? (exchangeOfFrame(m, run.runId, frameId) ?? null) : null;
  // the whole exchange, so the inspector links its request, retries and answers without another request
  const exchangeRow = exchangeId === null || !run ? undefined : findExchange(m, run.runId, exchangeId);
  const exchange = exchangeRow ? toExchangeRow(exchangeRow, stationNames(m, capture.id)) : null;
  const base = { frameId, map: { id: resolved.mapId, name: mapName, version: resolved.version }, exchangeId, exchange };
  const settingsJson = jobSettings(m, jobId);
  if (settingsJson === null) throw notFound(`No decode settings for this capture's decoded frames`);
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
