// Line timing of a decode run, built from its stored rows: frames (station and direction from the
// run's channel roles), request-line edges from the line events, and the visible call run's
// exchanges. Reading a few hundred thousand rows takes a moment, so the result is kept per
// (decode run, call run) for the next request: the schedule view asks for many windows of it.
import { and, asc, eq, inArray } from 'drizzle-orm';
import type { Db } from '../../db/client';
import { iterateValues } from '../../db/rows';
import { decodeJobs, exchanges as exchangesTable, frames as framesTable, lineEvents } from '../../db/schema';
import type { FrameKind, FrameStatus, LineEventKind } from '../../../shared/decoder';
import { callLayerRoles, type ExchangeOutcome } from '../../../shared/decoder/calls';
import { LineTiming, type Schedule, type ServiceReport } from '../../../shared/decoder/timing';
import { captureSettingsSchema, type CaptureSettings } from '../../../shared/schemas';

export interface BuiltTiming {
  service: ServiceReport;
  schedule: Schedule;
  frames: number;
  exchanges: number;
  unattributed: number;
  /** true when no link had a known direction: nothing could be put in a lane */
  noRoles: boolean;
}

/** runs kept: each is a few typed arrays per lane */
const KEEP = 4;
const cache = new Map<string, BuiltTiming>();

/** The run's line timing, from the cache when the same decode and call runs were built before. */
export function timingOf(db: Db, jobId: number, callRunId: number | null, rigStations: number[]): BuiltTiming {
  const key = `${jobId}:${callRunId ?? '-'}:${rigStations.join(',')}`;
  const hit = cache.get(key);
  if (hit) {
    // most recently used last
    cache.delete(key);
    cache.set(key, hit);
    return hit;
  }
  const built = buildTiming(db, jobId, callRunId, rigStations);
  cache.set(key, built);
  while (cache.size > KEEP) cache.delete(cache.keys().next().value!);
  return built;
}

/** the driver's values of a frame row: id, link, t, tEnd, status, address, kind, pf (0/1: no column decoders) */
type FrameTuple = [number, string, number, number, FrameStatus, number | null, FrameKind | null, number | null];

export function buildTiming(db: Db, jobId: number, callRunId: number | null, rigStations: number[]): BuiltTiming {
  const raw = db.select({ settings: decodeJobs.settings }).from(decodeJobs).where(eq(decodeJobs.id, jobId)).get()?.settings;
  const settings: CaptureSettings = captureSettingsSchema.parse(raw ? JSON.parse(raw) : {});
  const { links, rts } = callLayerRoles(settings);
  const roles = new Map(links.map((l) => [l.link, l]));
  // per-port wiring names each port's station; on a shared line the rig's stations are the roster
  const portStations = links.map((l) => l.station).filter((s): s is number => s !== undefined);
  const roster = portStations.length > 0 ? new Set(portStations) : rigStations.length > 0 ? new Set(rigStations) : null;
  const timing = new LineTiming({ secondsPerUnit: 1 });
  const known = new Set<number>();
  let frames = 0;
  let unattributed = 0;
  const rows = iterateValues<FrameTuple>(
    db,
    db
      .select({ id: framesTable.id, link: framesTable.link, t: framesTable.t, tEnd: framesTable.tEnd, status: framesTable.status, address: framesTable.address, kind: framesTable.kind, pf: framesTable.pf })
      .from(framesTable)
      .where(eq(framesTable.jobId, jobId))
      .orderBy(asc(framesTable.t), asc(framesTable.id)),
  );
  for (const [id, link, t, tEnd, status, address, kind, pf] of rows) {
    frames++;
    const role = roles.get(link);
    const station = role?.station ?? address;
    if (!role || station === null || station === undefined || (status !== 'ok' && role.station === undefined && !known.has(station)) || (roster && !roster.has(station))) {
      unattributed++;
      continue;
    }
    if (status === 'ok') known.add(station);
    timing.frame({
      station,
      direction: role.direction,
      first: t,
      last: tEnd,
      status,
      kind,
      pf: pf === 1,
      id,
    });
  }
  if (rts.length > 0) {
    const lineOf = new Map(rts.map((r) => [r.channel, r.station]));
    const edges = iterateValues<[string, Extract<LineEventKind, 'rise' | 'fall'>, number]>(
      db,
      db
        .select({ channel: lineEvents.channel, kind: lineEvents.kind, t: lineEvents.t })
        .from(lineEvents)
        .where(and(eq(lineEvents.jobId, jobId), inArray(lineEvents.kind, ['rise', 'fall']), inArray(lineEvents.channel, rts.map((r) => r.channel))))
        .orderBy(asc(lineEvents.t), asc(lineEvents.id)),
    );
    for (const [channel, kind, t] of edges) timing.requestLine(lineOf.get(channel)!, kind === 'rise', t);
  }
  let exchanges = 0;
  if (callRunId !== null) {
    const xs = iterateValues<[number, number, number, number, number | null, number | null, ExchangeOutcome]>(
      db,
      db
      .select({
        id: exchangesTable.id,
        station: exchangesTable.station,
        tRequest: exchangesTable.tRequest,
        tRequestEnd: exchangesTable.tRequestEnd,
        tResponse: exchangesTable.tResponse,
        rtt: exchangesTable.rtt,
        outcome: exchangesTable.outcome,
      })
      .from(exchangesTable)
      .where(eq(exchangesTable.runId, callRunId))
      .orderBy(asc(exchangesTable.tRequest), asc(exchangesTable.id)),
    );
    for (const [id, station, tRequest, tRequestEnd, tResponse, rtt, outcome] of xs) {
      if (roster && !roster.has(station)) continue;
      exchanges++;
      timing.exchange({ station, first: tRequest, end: tResponse ?? tRequestEnd, outcome, rttSeconds: rtt, id });
    }
  }
  const { service, schedule } = timing.finish();
  return { service, schedule, frames, exchanges, unattributed, noRoles: links.length === 0 };
}

/** forget every kept run (tests, and a run's rows being cleared) */
export function clearTimingCache(): void {
  cache.clear();
}
