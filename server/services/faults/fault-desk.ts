import type { DamageCauseName, FaultAnomaly, FaultDeskView, FaultFrameRow, FaultQuery } from '../../../shared/schemas';
import { DAMAGE_CAUSES, ANOMALY_KINDS, RACE_CAUSE_WORDS, type FaultBins, type LineAnomaly, type RaceDetail, type RaceSummary } from '../../../shared/decoder/faults';
import type { CaptureDeps } from '../captures/deps';
import { currentJob, type CaptureRow } from '../captures/rows';
import { describeFault } from './diagnosis';

interface StoredRow {
  link: string;
  seq: number;
  frame_id: number | null;
  first_sample: number;
  cause: DamageCauseName;
  station: number | null;
  flipped_bit: number | null;
  suspect_line_bit: number | null;
  focus_sample: number | null;
  anomalies: string;
  next_frame_id: number | null;
  retransmission_seq: number | null;
  retransmission_frame_id: number | null;
  retransmission_by: 'call' | 'ns' | null;
  retransmission_search: FaultFrameRow['retransmissionSearch'];
  status: FaultFrameRow['status'] | null;
  fcs_received: number | null;
  fcs_computed: number | null;
  stuffed: string | null;
  race: string | null;
}

interface StoredSummary {
  groups: string;
  anomaly_groups: string;
  outside: string;
  outside_total: number;
  bins: string;
  frames_seen: number;
  anomalies_dropped: number;
  races: string | null;
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
  const summary = deps.sqlite.prepare('select * from fault_summaries where job_id = ?').get(job.id) as StoredSummary | undefined;
  if (!summary) return empty;

  const races = summary.races ? (JSON.parse(summary.races) as RaceSummary) : null;
  const storedGroups = JSON.parse(summary.groups) as FaultDeskView['groups'];
  // runs decoded before the race causes were stored list only the causes of their day
  const groups = DAMAGE_CAUSES.map((cause) => storedGroups.find((g) => g.cause === cause) ?? { cause, count: 0 });
  const total = q.cause ? (groups.find((g) => g.cause === q.cause)?.count ?? 0) : groups.reduce((n, g) => n + g.count, 0);
  const stored = deps.sqlite
    .prepare(
      `select r.*, f.status, f.fcs_received, f.fcs_computed, f.stuffed
         from fault_rows r left join frames f on f.id = r.frame_id
        where r.job_id = ? ${q.cause ? 'and r.cause = ?' : ''}
        order by r.first_sample, r.id limit ? offset ?`,
    )
    .all(...(q.cause ? [job.id, q.cause] : [job.id]), q.limit, q.offset) as StoredRow[];
  const names = new Map(
    (deps.sqlite.prepare('select address, name from stations where rig_id = ?').all(c.rigId) as { address: number; name: string }[]).map((s) => [s.address, s.name]),
  );
  const anomaly = (a: LineAnomaly): FaultAnomaly => ({ ...a, t: a.sample * period });
  const rows: FaultFrameRow[] = stored.map((r) => {
    const anomalies = (JSON.parse(r.anomalies) as LineAnomaly[]).map(anomaly);
    const status =
      r.status ?? (r.cause === 'abort' || r.cause === 'short' || r.cause === 'residue' ? r.cause : r.cause === 'bad-fcs-explained' || r.cause === 'bad-fcs-unexplained' ? 'bad-fcs' : 'ok');
    const stuffedBefore = r.suspect_line_bit !== null && r.flipped_bit !== null ? r.suspect_line_bit - r.flipped_bit : 0;
    const race = r.race ? (JSON.parse(r.race) as RaceDetail) : null;
    return {
      frameId: r.frame_id,
      link: r.link,
      seq: r.seq,
      t: r.first_sample * period,
      station: r.station,
      stationName: r.station !== null ? (names.get(r.station) ?? null) : null,
      status,
      cause: r.cause,
      diagnosis: describeFault({
        cause: r.cause,
        fcsReceived: r.fcs_received,
        fcsComputed: r.fcs_computed,
        flippedBit: r.flipped_bit,
        suspectLineBit: r.suspect_line_bit,
        stuffedBefore,
        anomalies,
        retransmissionSeq: r.retransmission_seq,
        retransmissionBy: r.retransmission_by,
        retransmissionSearch: r.retransmission_search,
        race,
        budget: races?.budget ?? null,
      }),
      fcsReceived: r.fcs_received,
      fcsComputed: r.fcs_computed,
      flippedBit: r.flipped_bit,
      suspectLineBit: r.suspect_line_bit,
      focusSample: r.focus_sample,
      anomalies,
      nextFrameId: r.next_frame_id,
      retransmissionFrameId: r.retransmission_frame_id,
      retransmissionBy: r.retransmission_by,
      retransmissionSearch: r.retransmission_search,
      race,
    };
  });
  const bins = JSON.parse(summary.bins) as FaultBins | null;
  return {
    available: true,
    groups,
    anomalyGroups: JSON.parse(summary.anomaly_groups) as FaultDeskView['anomalyGroups'],
    rows,
    total,
    offset: q.offset,
    limit: q.limit,
    outside: (JSON.parse(summary.outside) as LineAnomaly[]).map(anomaly),
    outsideTotal: summary.outside_total,
    bins: bins && {
      binSeconds: bins.binSeconds,
      start: bins.start.map((s) => s * period),
      byCause: bins.byCause,
      frames: bins.frames,
      anomalies: bins.anomalies,
    },
    framesSeen: summary.frames_seen,
    anomaliesDropped: summary.anomalies_dropped,
    samplePeriod: period,
    races,
    raceWords: RACE_CAUSE_WORDS,
  };
}
