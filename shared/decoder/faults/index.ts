// The fault desk engine: every damaged frame of a capture with its diagnosis, the frame that
// followed it from the same station, the retransmission when the link or call layer shows one,
// line anomalies inside frames, and counts over time.
//
// FaultDesk is a sink: push every decoded frame (good ones too — they are the followers and
// retransmissions, and a good frame can carry a line anomaly) in the decoder's time order, and
// every anomaly from the AnomalyTap in any order; finish() gives the report. Good frames cost a
// few typed-array entries each; only damaged frames and anomalies are kept as objects.
import type { DecodedFrame, FrameStatus, LineEvent } from '../types';
import { ANOMALY_KINDS, FrameWindowIndex, type AnomalyKind, type FrameRef, type LineAnomaly } from './anomalies';
import {
  binFaults,
  DAMAGE_CAUSES,
  diagnoseFrame,
  type CallKeyLookup,
  type DamageCause,
  type FaultBins,
  type SuspectBit,
} from './classify';

export * from './anomalies';
export * from './classify';

/** A frame that came after a damaged one. */
export interface FollowerRef extends FrameRef {
  firstSample: number;
  status: FrameStatus;
}

export type RetransmissionSearch =
  /** found: `retransmission` is set */
  | 'found'
  /** the station sent `lookahead` frames on the link without repeating it */
  | 'not-found'
  /** the capture ended before `lookahead` frames of the station came */
  | 'capture-ended'
  /** nothing to match on: not an I frame and no call-layer key (S/U frames, unreadable damage), or a good frame */
  | 'not-applicable';

export interface FaultRow {
  link: string;
  seq: number;
  firstSample: number;
  lastSample: number;
  status: FrameStatus;
  cause: DamageCause;
  fcsReceived: number | null;
  fcsComputed: number | null;
  flippedBit: number | null;
  /** where to draw the waveform: the flipped bit when one explains the FCS */
  suspect: SuspectBit | null;
  /**
   * sample to centre the waveform on: the suspect bit, else the first anomaly inside the frame,
   * else the frame's end for abort/residue (where the frame broke off), else null (show the frame)
   */
  focusSample: number | null;
  station: number | null;
  kind: 'I' | 'S' | 'U' | null;
  command: string | null;
  ns: number | null;
  /** station and link fields read from the bytes with the flipped bit put back */
  corrected: boolean;
  callKey: string | null;
  /** line anomalies inside the frame's window, in sample order */
  anomalies: LineAnomaly[];
  /** the next frame on the same link from the same station (any status) */
  next: FollowerRef | null;
  retransmission: (FollowerRef & { by: 'call' | 'ns' }) | null;
  retransmissionSearch: RetransmissionSearch;
}

export interface FaultGroup {
  cause: DamageCause;
  count: number;
  /** indices into FaultReport.rows */
  rows: number[];
}

export interface AnomalyGroup {
  kind: AnomalyKind;
  /** anomalies inside at least one frame */
  inFrames: number;
  /** anomalies outside every frame (silences outside frames are not anomalies and not counted) */
  outside: number;
  /** rows carrying this kind, indices into FaultReport.rows */
  rows: number[];
}

export interface FaultReport {
  /** every damaged frame, and every good frame with an anomaly inside, in time order */
  rows: FaultRow[];
  groups: FaultGroup[];
  anomalyGroups: AnomalyGroup[];
  /** anomalies inside no frame (glitches on an idle line, clock trouble between frames), time order */
  outside: LineAnomaly[];
  bins: FaultBins;
  framesSeen: number;
  /** anomalies not kept because maxAnomalies was reached */
  anomaliesDropped: number;
}

export interface FaultDeskOptions {
  samplePeriodSeconds: number;
  /** FCS width used by the decoder (default 16) */
  fcs?: 16 | 32;
  /** call-layer identity of a frame; a later frame with the same key is the retransmission */
  callKey?: CallKeyLookup;
  /** frames of the same station on the link searched for the retransmission (default 8, one modulo-8 cycle) */
  lookahead?: number;
  /** bins for the counts over time (default 48) */
  bins?: number;
  /** anomalies kept (default 100 000); more are counted as dropped */
  maxAnomalies?: number;
}

interface Pending {
  row: number;
  seen: number;
}

export class FaultDesk {
  private readonly rows: FaultRow[] = [];
  private readonly rowOf = new Map<string, number>();
  private readonly pending = new Map<string, Pending[]>();
  private readonly windows = new FrameWindowIndex();
  private readonly anomalies: LineAnomaly[] = [];
  private dropped = 0;
  private frames = 0;
  private endSample = 0;
  private readonly lookahead: number;
  private readonly fcsOctets: 2 | 4;

  constructor(private readonly options: FaultDeskOptions) {
    this.lookahead = Math.max(1, options.lookahead ?? 8);
    this.fcsOctets = options.fcs === 32 ? 4 : 2;
  }

  /**
   * A decoded frame, in time order per link. `bitSamples` (sample of each line bit after the
   * opening flag), when the caller has them, makes the suspect bit's position exact.
   */
  frame(f: DecodedFrame, bitSamples?: ArrayLike<number> | null): void {
    this.frames++;
    if (f.lastSample > this.endSample) this.endSample = f.lastSample;
    const damaged = f.status !== 'ok';
    const diag = damaged ? diagnoseFrame(f, { fcsOctets: this.fcsOctets, callKey: this.options.callKey, bitSamples }) : null;
    // identity of this frame as a possible follower: the address (corrected when one bit explains a bad FCS)
    const station = diag ? diag.station : f.decode ? f.decode.address : f.bytes.length > 0 ? f.bytes[0] : null;
    this.windows.add(f.link, f.seq, f.firstSample, f.lastSample, station ?? -1);
    if (station !== null) this.follow(f, station, diag ? { kind: diag.kind, ns: diag.ns, key: diag.callKey } : null);
    if (!diag) return;
    const row: FaultRow = {
      link: f.link,
      seq: f.seq,
      firstSample: f.firstSample,
      lastSample: f.lastSample,
      status: f.status,
      cause: diag.cause,
      fcsReceived: f.fcsReceived,
      fcsComputed: f.fcsComputed,
      flippedBit: f.flippedBit,
      suspect: diag.suspect,
      focusSample: null,
      station: diag.station,
      kind: diag.kind,
      command: diag.command,
      ns: diag.ns,
      corrected: diag.corrected,
      callKey: diag.callKey,
      anomalies: [],
      next: null,
      retransmission: null,
      retransmissionSearch: diag.callKey !== null || (diag.kind === 'I' && diag.ns !== null) ? 'capture-ended' : 'not-applicable',
    };
    const index = this.rows.push(row) - 1;
    this.rowOf.set(refKey(f.link, f.seq), index);
    if (station !== null) {
      const key = stationKey(f.link, station);
      const list = this.pending.get(key);
      if (list) list.push({ row: index, seen: 0 });
      else this.pending.set(key, [{ row: index, seen: 0 }]);
    }
  }

  /** line events are not faults; taken so the desk can stand where a FrameSink is expected */
  event(e: LineEvent): void {
    const end = e.endSample ?? e.sample;
    if (end > this.endSample) this.endSample = end;
  }

  anomaly(a: LineAnomaly): void {
    if (a.endSample > this.endSample) this.endSample = a.endSample;
    if (this.anomalies.length >= (this.options.maxAnomalies ?? 100_000)) {
      this.dropped++;
      return;
    }
    this.anomalies.push(a);
  }

  /** a frame from `station` on its link: the follower of earlier damaged frames of that station */
  private follow(f: DecodedFrame, station: number, own: { kind: string | null; ns: number | null; key: string | null } | null): void {
    if (this.pending.size === 0) return;
    const key = stationKey(f.link, station);
    const list = this.pending.get(key);
    if (!list) return;
    // the follower's own identity; for a good frame computed only now that someone waits for it
    let kind = own?.kind ?? null;
    let ns = own?.ns ?? null;
    let callKey = own?.key ?? null;
    if (!own) {
      kind = f.decode?.kind ?? null;
      ns = f.decode?.ns ?? null;
      callKey = this.options.callKey && list.some((p) => this.rows[p.row].callKey !== null) ? this.options.callKey(f) : null;
    }
    const ref: FollowerRef = { link: f.link, seq: f.seq, firstSample: f.firstSample, status: f.status };
    let keep = 0;
    for (let i = 0; i < list.length; i++) {
      const p = list[i];
      const row = this.rows[p.row];
      if (row.next === null) row.next = ref;
      p.seen++;
      let by: 'call' | 'ns' | null = null;
      if (row.callKey !== null && callKey !== null && row.callKey === callKey) by = 'call';
      else if (row.kind === 'I' && row.ns !== null && kind === 'I' && ns === row.ns) by = 'ns';
      if (by) {
        row.retransmission = { ...ref, by };
        row.retransmissionSearch = 'found';
      } else if (p.seen >= this.lookahead) {
        if (row.retransmissionSearch === 'capture-ended') row.retransmissionSearch = 'not-found';
      } else {
        list[keep++] = p;
      }
    }
    list.length = keep;
    if (keep === 0) this.pending.delete(key);
  }

  /** the report; `endSample` (the capture's last sample) sets the span of the counts over time */
  finish(endSample?: number): FaultReport {
    const end = Math.max(endSample ?? 0, this.endSample);
    const rows = this.rows;
    const extra: FaultRow[] = [];
    const extraOf = new Map<string, FaultRow>();
    const outside: LineAnomaly[] = [];
    const sorted = [...this.anomalies].sort((a, b) => a.sample - b.sample || a.endSample - b.endSample);
    const inFrames = new Map<AnomalyKind, number>();
    const outsideCount = new Map<AnomalyKind, number>();
    const binned: number[] = [];
    for (const a of sorted) {
      const hits = this.windows.find(a);
      if (hits.length === 0) {
        // a pause outside every frame is the line resting, not a fault
        if (a.kind === 'silence') continue;
        outside.push(a);
        outsideCount.set(a.kind, (outsideCount.get(a.kind) ?? 0) + 1);
        binned.push(a.sample);
        continue;
      }
      inFrames.set(a.kind, (inFrames.get(a.kind) ?? 0) + 1);
      binned.push(a.sample);
      for (const h of hits) {
        const key = refKey(h.link, h.seq);
        const at = this.rowOf.get(key);
        let row = at !== undefined ? rows[at] : extraOf.get(key);
        if (!row) {
          // a good frame with a line anomaly inside
          row = goodFrameRow(h.link, h.seq, h.first, h.last, h.tag >= 0 ? h.tag : null);
          extra.push(row);
          extraOf.set(key, row);
        }
        row.anomalies.push(a);
      }
    }
    const all = [...rows, ...extra].sort((a, b) => a.firstSample - b.firstSample || (a.link < b.link ? -1 : a.link > b.link ? 1 : a.seq - b.seq));
    for (const r of all) r.focusSample = focusOf(r);
    const groups: FaultGroup[] = DAMAGE_CAUSES.map((cause) => ({ cause, count: 0, rows: [] }));
    const byCause = new Map(groups.map((g) => [g.cause, g]));
    const anomalyGroups: AnomalyGroup[] = ANOMALY_KINDS.map((kind) => ({
      kind,
      inFrames: inFrames.get(kind) ?? 0,
      outside: outsideCount.get(kind) ?? 0,
      rows: [],
    }));
    const byKind = new Map(anomalyGroups.map((g) => [g.kind, g]));
    all.forEach((r, i) => {
      const g = byCause.get(r.cause)!;
      g.count++;
      g.rows.push(i);
      for (const kind of new Set(r.anomalies.map((a) => a.kind))) byKind.get(kind)!.rows.push(i);
    });
    return {
      rows: all,
      groups,
      anomalyGroups,
      outside,
      bins: binFaults(all, binned, end, this.options.samplePeriodSeconds, this.options.bins),
      framesSeen: this.frames,
      anomaliesDropped: this.dropped,
    };
  }
}

function goodFrameRow(link: string, seq: number, first: number, last: number, station: number | null): FaultRow {
  return {
    link,
    seq,
    firstSample: first,
    lastSample: last,
    status: 'ok',
    cause: 'line-anomaly',
    fcsReceived: null,
    fcsComputed: null,
    flippedBit: null,
    suspect: null,
    focusSample: null,
    station,
    kind: null,
    command: null,
    ns: null,
    corrected: false,
    callKey: null,
    anomalies: [],
    next: null,
    retransmission: null,
    retransmissionSearch: 'not-applicable',
  };
}

function focusOf(r: FaultRow): number | null {
  if (r.suspect) return r.suspect.sample;
  if (r.anomalies.length > 0) return Math.max(r.firstSample, r.anomalies[0].sample);
  if (r.cause === 'abort' || r.cause === 'residue') return r.lastSample;
  return null;
}

const refKey = (link: string, seq: number) => `${link}\u0000${seq}`;
const stationKey = (link: string, station: number) => `${link}\u0000${station}`;
