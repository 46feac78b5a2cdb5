import type Database from 'better-sqlite3';
import type { Exchange } from '../../shared/decoder/calls/exchanges';
import type { ClockSpread } from '../../shared/decoder/timing/clock-spread';
import { callKeyFromFieldMap, FaultDesk, type CallKeyLookup, type FaultDeskOptions, type FaultReport, type LineAnomaly } from '../../shared/decoder/faults';
import type { DecodedFrame, LineEvent } from '../../shared/decoder/types';
import type { CaptureSettings } from '../../shared/schemas';
import { chosenMap } from './call-stage';

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
    /** race-signature options (server/services/timing/fault-races.ts) */
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
 * The call-layer identity of frames under the capture's chosen map, so a repeated call counts as
 * the retransmission even when the link layer numbers it anew. Links of unknown direction have none;
 * a map that cannot be loaded leaves only N(S) matching (the call stage reports the map's failure).
 */
export function faultCallKey(db: Database.Database, captureId: number, settings: CaptureSettings): CallKeyLookup | undefined {
  try {
    const { map } = chosenMap(db, captureId);
    const direction = new Map(settings.links.map((l) => [l.channel, l.direction]));
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
export function storeFaultReport(db: Database.Database, jobId: number, captureId: number, period: number, report: FaultReport | null): void {
  const frameAt = db.prepare('select id from frames where job_id = ? and link = ? and t between ? and ? and seq = ? limit 1');
  const idOf = (link: string, seq: number, firstSample: number): number | null => {
    const t = firstSample * period;
    const slack = Math.abs(t) * 1e-9 + 1e-12;
    const row = frameAt.get(jobId, link, t - slack, t + slack, seq) as { id: number } | undefined;
    return row ? row.id : null;
  };
  const insert = db.prepare(
    `insert into fault_rows (job_id, link, seq, frame_id, first_sample, cause, station, corrected, flipped_bit, suspect_line_bit, suspect_sample,
       suspect_exact, focus_sample, anomalies, next_seq, next_frame_id, retransmission_seq, retransmission_frame_id, retransmission_by, retransmission_search)
     values (?, ?, ?, ?, ?, ?, ?, ?, ?, ?, ?, ?, ?, ?, ?, ?, ?, ?, ?, ?)`,
  );
  const rows = report?.rows ?? [];
  const writeBatch = db.transaction((from: number) => {
    for (const r of rows.slice(from, from + BATCH)) {
      insert.run(
        jobId,
        r.link,
        r.seq,
        idOf(r.link, r.seq, r.firstSample),
        r.firstSample,
        r.cause,
        r.station,
        r.corrected ? 1 : 0,
        r.flippedBit,
        r.suspect ? r.suspect.lineBit : null,
        r.suspect ? r.suspect.sample : null,
        r.suspect ? (r.suspect.exact ? 1 : 0) : null,
        r.focusSample,
        JSON.stringify(r.anomalies),
        r.next ? r.next.seq : null,
        r.next ? idOf(r.next.link, r.next.seq, r.next.firstSample) : null,
        r.retransmission ? r.retransmission.seq : null,
        r.retransmission ? idOf(r.retransmission.link, r.retransmission.seq, r.retransmission.firstSample) : null,
        r.retransmission ? r.retransmission.by : null,
        r.retransmissionSearch,
      );
    }
  });
  for (let i = 0; i < rows.length; i += BATCH) writeBatch.immediate(i);
  db.prepare(
    `insert or replace into fault_summaries (job_id, groups, anomaly_groups, outside, outside_total, bins, frames_seen, anomalies_dropped)
     values (?, ?, ?, ?, ?, ?, ?, ?)`,
  ).run(
    jobId,
    JSON.stringify((report?.groups ?? []).map((g) => ({ cause: g.cause, count: g.count }))),
    JSON.stringify((report?.anomalyGroups ?? []).map((g) => ({ kind: g.kind, inFrames: g.inFrames, outside: g.outside, rows: g.rows.length }))),
    JSON.stringify((report?.outside ?? []).slice(0, OUTSIDE_KEPT)),
    report?.outside.length ?? 0,
    JSON.stringify(report?.bins ?? null),
    report?.framesSeen ?? 0,
    report?.anomaliesDropped ?? 0,
  );
}
