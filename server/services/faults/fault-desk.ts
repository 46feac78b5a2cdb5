import type { FaultAnomaly, FaultDeskView, FaultFrameRow, FaultQuery } from '../../../shared/schemas';
import { DAMAGE_CAUSES, ANOMALY_KINDS, RACE_CAUSE_WORDS, type FaultBins, type LineAnomaly, type RaceDetail, type RaceSummary } from '../../../shared/decoder/faults';
import { and, asc, eq, sql } from 'drizzle-orm';
import { prepared } from '../../db/prepared';
import { allRows } from '../../db/rows';
import { faultRows, faultSummaries, frames, stations } from '../../db/schema';
import type { CaptureDeps } from '../captures/deps';
import { currentJob, type CaptureRow } from '../captures/rows';
import { describeFault } from './diagnosis';

/** a fault row with its frame's verdict: the frame's columns are null when the row has no frame (left join) */
const rowColumns = {
  link: faultRows.link,
  seq: faultRows.seq,
  frameId: faultRows.frameId,
  firstSample: faultRows.firstSample,
  cause: faultRows.cause,
  station: faultRows.station,
  flippedBit: faultRows.flippedBit,
  suspectLineBit: faultRows.suspectLineBit,
  focusSample: faultRows.focusSample,
  anomalies: faultRows.anomalies,
  nextFrameId: faultRows.nextFrameId,
  retransmissionSeq: faultRows.retransmissionSeq,
  retransmissionFrameId: faultRows.retransmissionFrameId,
  retransmissionBy: faultRows.retransmissionBy,
  retransmissionSearch: faultRows.retransmissionSearch,
  race: faultRows.race,
  status: sql<FaultFrameRow['status'] | null>`${frames.status}`,
  fcsReceived: sql<number | null>`${frames.fcsReceived}`,
  fcsComputed: sql<number | null>`${frames.fcsComputed}`,
};

const ph = sql.placeholder;

/** the rig's station names by address */
function stationNames(deps: Pick<CaptureDeps, 'db'>, rigId: number): Map<number, string> {
  const rows = prepared(deps.db, 'fault desk station names', () =>
    deps.db.select({ address: stations.address, name: stations.name }).from(stations).where(eq(stations.rigId, ph('rigId'))).prepare(),
  ).all({ rigId });
  return new Map(rows.map((s) => [s.address, s.name]));
}

/** The fault desk of the capture's visible run: one page of rows of the chosen cause, plus the whole run's groups and bins. */
export function faultDesk(deps: CaptureDeps, c: CaptureRow, q: FaultQuery): FaultDeskView {
  const job = currentJob(deps, c);
  const period = job?.samplePeriod ?? 0;
  const empty: FaultDeskView = {
    available: false,
    groups: DAMAGE_CAUSES.map((cause) => ({ cause, count: 0 })),
    anomalyGroups: ANOMALY_KINDS.map((kind) => ({ kind, inFrames: 0, outside: 0, rows: 0 })),
    rows: [],
    total: 0,
    offset: q.offset,
    limit: q.limit,
    outside: [],
    outsideTotal: 0,
    bins: null,
    framesSeen: 0,
    anomaliesDropped: 0,
    samplePeriod: period,
    races: null,
    raceWords: RACE_CAUSE_WORDS,
  };
  if (!job) return empty;
  const summary = prepared(deps.db, 'fault summary', () => deps.db.select().from(faultSummaries).where(eq(faultSummaries.jobId, ph('jobId'))).prepare()).get({
    jobId: job.id,
  });
  if (!summary) return empty;

  const races = summary.races ? (JSON.parse(summary.races) as RaceSummary) : null;
  const storedGroups = JSON.parse(summary.groups) as FaultDeskView['groups'];
  // runs decoded before the race causes were stored list only the causes of their day
  const groups = DAMAGE_CAUSES.map((cause) => storedGroups.find((g) => g.cause === cause) ?? { cause, count: 0 });
  const total = q.cause ? (groups.find((g) => g.cause === q.cause)?.count ?? 0) : groups.reduce((n, g) => n + g.count, 0);
  const byCause = q.cause !== undefined;
  const page = prepared(deps.db, `fault rows ${byCause ? 'of a cause' : 'all'}`, () =>
    deps.db
      .select(rowColumns)
      .from(faultRows)
      .leftJoin(frames, eq(frames.id, faultRows.frameId))
      .where(byCause ? and(eq(faultRows.jobId, ph('jobId')), eq(faultRows.cause, ph('cause'))) : eq(faultRows.jobId, ph('jobId')))
      .orderBy(asc(faultRows.firstSample), asc(faultRows.id))
      .limit(ph('limit'))
      .offset(ph('offset'))
      .prepare(),
  );
  const stored = allRows(page, rowColumns, { jobId: job.id, cause: q.cause, limit: q.limit, offset: q.offset });
  const names = stationNames(deps, c.rigId);
  const anomaly = (a: LineAnomaly): FaultAnomaly => ({ ...a, t: a.sample * period });
  const rows: FaultFrameRow[] = stored.map((r) => {
    const anomalies = (JSON.parse(r.anomalies) as LineAnomaly[]).map(anomaly);
    const status =
      r.status ?? (r.cause === 'abort' || r.cause === 'short' || r.cause === 'residue' ? r.cause : r.cause === 'bad-fcs-explained' || r.cause === 'bad-fcs-unexplained' ? 'bad-fcs' : 'ok');
    const stuffedBefore = r.suspectLineBit !== null && r.flippedBit !== null ? r.suspectLineBit - r.flippedBit : 0;
    const race = r.race ? (JSON.parse(r.race) as RaceDetail) : null;
    return {
      frameId: r.frameId,
      link: r.link,
      seq: r.seq,
      t: r.firstSample * period,
      station: r.station,
      stationName: r.station !== null ? (names.get(r.station) ?? null) : null,
      status,
      cause: r.cause,
      diagnosis: describeFault({
        cause: r.cause,
        fcsReceived: r.fcsReceived,
        fcsComputed: r.fcsComputed,
        flippedBit: r.flippedBit,
        suspectLineBit: r.suspectLineBit,
        stuffedBefore,
        anomalies,
        retransmissionSeq: r.retransmissionSeq,
        retransmissionBy: r.retransmissionBy,
        retransmissionSearch: r.retransmissionSearch,
        race,
        budget: races?.budget ?? null,
      }),
      fcsReceived: r.fcsReceived,
      fcsComputed: r.fcsComputed,
      flippedBit: r.flippedBit,
      suspectLineBit: r.suspectLineBit,
      focusSample: r.focusSample,
      anomalies,
      nextFrameId: r.nextFrameId,
      retransmissionFrameId: r.retransmissionFrameId,
      retransmissionBy: r.retransmissionBy,
      retransmissionSearch: r.retransmissionSearch,
      race,
    };
  });
  const bins = JSON.parse(summary.bins) as FaultBins | null;
  return {
    available: true,
    groups,
    anomalyGroups: JSON.parse(summary.anomalyGroups) as FaultDeskView['anomalyGroups'],
    rows,
    total,
    offset: q.offset,
    limit: q.limit,
    outside: (JSON.parse(summary.outside) as LineAnomaly[]).map(anomaly),
    outsideTotal: summary.outsideTotal,
    bins: bins && {
      binSeconds: bins.binSeconds,
      start: bins.start.map((s) => s * period),
      byCause: bins.byCause,
      frames: bins.frames,
      anomalies: bins.anomalies,
    },
    framesSeen: summary.framesSeen,
    anomaliesDropped: summary.anomaliesDropped,
    samplePeriod: period,
    races,
    raceWords: RACE_CAUSE_WORDS,
  };
}
