import type Database from 'better-sqlite3';
import { and, between, eq, sql } from 'drizzle-orm';
import { drizzle } from 'drizzle-orm/better-sqlite3';
import { placeholders, type FullRow } from '../db/placeholders';
import * as schema from '../db/schema';
import { faultRows, faultSummaries, frames } from '../db/schema';
import type { Exchange } from '../../shared/decoder/calls';
import { callKeyFromFieldMap, FaultDesk, type CallKeyLookup, type FaultDeskOptions, type FaultReport, type LineAnomaly } from '../../shared/decoder/faults';
import type { ClockSpread } from '../../shared/decoder/timing';
import type { DecodedFrame, LineEvent } from '../../shared/decoder';
import { loadMapVersion, type RunInputs } from './inputs';

// The fault desk of one decode run, fed beside the row writer, and its report stored with the
// run's job id (fault_rows, fault_summaries) so it becomes visible together with the frames.

/** anomalies outside frames kept in the summary; the total is stored beside them */
export const OUTSIDE_KEPT = 200;
/** anomalies the desk holds in memory; more are only counted (keeps a noisy capture cheap) */
const MAX_ANOMALIES = 50_000;
const BATCH = 2000;

export class FaultRecorder {
  private desk: FaultDesk | null = null;

  /** `period` is asked when the first frame or anomaly arrives: the reader's header has set it by then */
  constructor(
    private readonly period: () => number,
    private readonly callKey?: CallKeyLookup,
    /** race-signature options (server/runs/fault-races.ts) */
    private readonly extra: Partial<FaultDeskOptions> = {},
  ) {}

  private ensure(): FaultDesk {
    this.desk ??= new FaultDesk({ ...this.extra, samplePeriodSeconds: this.period(), maxAnomalies: MAX_ANOMALIES, callKey: this.callKey });
    return this.desk;
  }

  frame(f: DecodedFrame): void {
    this.ensure().frame(f);
  }

  event(e: LineEvent): void {
    this.desk?.event(e);
  }

  anomaly(a: LineAnomaly): void {
    this.ensure().anomaly(a);
  }

  /** the captured clock's period spread: octet timing and the budget line's measured rate */
  clockSpread(spread: ClockSpread): void {
    this.ensure().clockSpread(spread);
  }

  /** the call layer's exchanges: receiver over-run symptoms */
  exchange(e: Exchange): void {
    this.desk?.exchange(e);
  }

  report(lastSample: number): FaultReport | null {
    return this.desk ? this.desk.finish(lastSample) : null;
  }
}

/**
 * The call-layer identity of frames under the run's field map, so a repeated call counts as
 * the retransmission even when the link layer numbers it anew. Links of unknown direction have none;
 * a map that cannot be loaded leaves only N(S) matching (the call stage reports the map's failure).
 */
export function faultCallKey(db: Database.Database, inputs: RunInputs): CallKeyLookup | undefined {
  try {
    const { map } = loadMapVersion(db, inputs.fieldMap.mapId, inputs.fieldMap.version);
    const direction = new Map(inputs.capture.links.map((l) => [l.channel, l.direction]));
    const byMap = callKeyFromFieldMap(map, (link) => (direction.get(link) === 'from-server' ? 'response' : 'request'));
    return (frame) => {
      const d = direction.get(frame.link);
      return d === 'to-server' || d === 'from-server' ? byMap(frame) : null;
    };
  } catch {
    return undefined;
  }
}

/**
 * Writes the report's rows with the ids of their frames (and of the follower and retransmission)
 * in the run's frames table; call after the frames are flushed.
 */
export function storeFaultReport(sqlite: Database.Database, jobId: number, captureId: number, period: number, report: FaultReport | null): void {
  const db = drizzle(sqlite, { schema });
  const frameAt = db
    .select({ id: frames.id })
    .from(frames)
    .where(
      and(
        eq(frames.jobId, sql.placeholder('jobId')),
        eq(frames.link, sql.placeholder('link')),
        between(frames.t, sql.placeholder('from'), sql.placeholder('to')),
        eq(frames.seq, sql.placeholder('seq')),
      ),
    )
    .limit(1)
    .prepare();
  const idOf = (link: string, seq: number, firstSample: number): number | null => {
    const t = firstSample * period;
    const slack = Math.abs(t) * 1e-9 + 1e-12;
    return frameAt.get({ jobId, link, from: t - slack, to: t + slack, seq })?.id ?? null;
  };
  const insert = db.insert(faultRows).values(placeholders(faultRows)).prepare();
  const rows = report?.rows ?? [];
  const writeBatch = sqlite.transaction((from: number) => {
    for (const r of rows.slice(from, from + BATCH)) {
      const row: FullRow<typeof faultRows> = {
        jobId,
        link: r.link,
        seq: r.seq,
        frameId: idOf(r.link, r.seq, r.firstSample),
        firstSample: r.firstSample,
        cause: r.cause,
        station: r.station,
        corrected: r.corrected,
        flippedBit: r.flippedBit,
        suspectLineBit: r.suspect ? r.suspect.lineBit : null,
        suspectSample: r.suspect ? r.suspect.sample : null,
        suspectExact: r.suspect ? r.suspect.exact : null,
        focusSample: r.focusSample,
        anomalies: JSON.stringify(r.anomalies),
        nextSeq: r.next ? r.next.seq : null,
        nextFrameId: r.next ? idOf(r.next.link, r.next.seq, r.next.firstSample) : null,
        retransmissionSeq: r.retransmission ? r.retransmission.seq : null,
        retransmissionFrameId: r.retransmission ? idOf(r.retransmission.link, r.retransmission.seq, r.retransmission.firstSample) : null,
        retransmissionBy: r.retransmission ? r.retransmission.by : null,
        retransmissionSearch: r.retransmissionSearch,
        // the race signature's detail (shared/decoder/faults/races.ts), when the row shows one
        race: r.race ? JSON.stringify(r.race) : null,
      };
      insert.run(row);
    }
  });
  for (let i = 0; i < rows.length; i += BATCH) writeBatch.immediate(i);
  const summary = {
    groups: JSON.stringify((report?.groups ?? []).map((g) => ({ cause: g.cause, count: g.count }))),
    anomalyGroups: JSON.stringify((report?.anomalyGroups ?? []).map((g) => ({ kind: g.kind, inFrames: g.inFrames, outside: g.outside, rows: g.rows.length }))),
    outside: JSON.stringify((report?.outside ?? []).slice(0, OUTSIDE_KEPT)),
    outsideTotal: report?.outside.length ?? 0,
    bins: JSON.stringify(report?.bins ?? null),
    framesSeen: report?.framesSeen ?? 0,
    anomaliesDropped: report?.anomaliesDropped ?? 0,
    races: report ? JSON.stringify(report.races) : null,
  };
  db.insert(faultSummaries)
    .values({ jobId, ...summary })
    .onConflictDoUpdate({ target: faultSummaries.jobId, set: summary })
    .run();
}
