import { z } from 'zod';
import { ANOMALY_KINDS, DAMAGE_CAUSES, type FaultRow, type RaceCause, type RaceDetail, type RaceSummary } from '../decoder/faults';
import { frameStatusSchema } from './captures';

// The fault desk of a capture (GET …/captures/:captureId/faults): damaged frames grouped by cause,
// line anomalies, and counts over time. Causes and anomaly kinds are the decoder's
// (shared/decoder/faults).

export const damageCauseSchema = z.enum(DAMAGE_CAUSES);
export type DamageCauseName = z.infer<typeof damageCauseSchema>;

export const anomalyKindSchema = z.enum(ANOMALY_KINDS);
export type AnomalyKindName = z.infer<typeof anomalyKindSchema>;

export const faultQuerySchema = z.object({
  cause: damageCauseSchema.optional(),
  limit: z.coerce.number().int().min(1).max(1000).default(200),
  offset: z.coerce.number().int().min(0).max(10_000_000).default(0),
});
export type FaultQuery = z.infer<typeof faultQuerySchema>;

export interface FaultAnomaly {
  kind: AnomalyKindName;
  link: string | null;
  channel: string;
  sample: number;
  endSample: number;
  /** seconds from the capture's start */
  t: number;
  count: number;
  bits: number;
}

export interface FaultFrameRow {
  /** frame id in the visible run (null if the frame could not be matched) */
  frameId: number | null;
  link: string;
  seq: number;
  /** seconds */
  t: number;
  station: number | null;
  /** the station's name on the rig, when known */
  stationName: string | null;
  status: z.infer<typeof frameStatusSchema>;
  cause: DamageCauseName;
  diagnosis: string;
  fcsReceived: number | null;
  fcsComputed: number | null;
  flippedBit: number | null;
  /** line bit after the opening flag of the suspect bit, when one flipped bit explains the FCS */
  suspectLineBit: number | null;
  /** sample to centre the waveform on, null: show the frame */
  focusSample: number | null;
  anomalies: FaultAnomaly[];
  nextFrameId: number | null;
  retransmissionFrameId: number | null;
  /** how the retransmission was found: same call-layer key, or the same N(S) */
  retransmissionBy: NonNullable<FaultRow['retransmission']>['by'] | null;
  retransmissionSearch: FaultRow['retransmissionSearch'];
  /** what shows a race signature on this row (under-run offset, over-run symptom, octet timing), else null */
  race: RaceDetail | null;
}

export interface FaultBinsView {
  binSeconds: number;
  /** seconds at the start of each bin */
  start: number[];
  byCause: Record<DamageCauseName, number[]>;
  frames: number[];
  anomalies: number[];
}

export interface FaultDeskView {
  /** false: nothing decoded yet, or the visible run was decoded before its faults were recorded (decode again) */
  available: boolean;
  groups: { cause: DamageCauseName; count: number }[];
  anomalyGroups: { kind: AnomalyKindName; inFrames: number; outside: number; rows: number }[];
  /** rows of the chosen cause (all causes when none), in time order, one page */
  rows: FaultFrameRow[];
  /** rows matching the filter in total */
  total: number;
  offset: number;
  limit: number;
  /** anomalies outside every frame, the first few; `outsideTotal` counts all */
  outside: FaultAnomaly[];
  outsideTotal: number;
  bins: FaultBinsView | null;
  framesSeen: number;
  anomaliesDropped: number;
  samplePeriod: number;
  /** the capture-wide race signatures with the budget line; null for runs decoded before they were recorded */
  races: RaceSummary | null;
  /** title and explanation of each race cause, as the desk shows them */
  raceWords: Record<RaceCause, { title: string; explanation: string }>;
}
