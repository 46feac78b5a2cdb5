// The fault desk engine: every damaged frame of a capture with its diagnosis, the frame that
// followed it from the same station, the retransmission when the link or call layer shows one,
// line anomalies inside frames, race signatures (races.ts), and counts over time.
//
// FaultDesk is a sink: push every decoded frame (good ones too — they are the followers and
// retransmissions, a good frame can carry a line anomaly, and a frame cut short by an under-run
// can check good) in the decoder's time order, every anomaly from the AnomalyTap in any order
// (and its clock spread), and, where the call layer runs beside it, every exchange; finish()
// gives the report. Good frames cost a few typed-array entries each; only damaged frames,
// anomalies and exchanges are kept as objects.
import type { Exchange } from '../calls/exchanges';
import { octetBudget, BitRateMeter, DEFAULT_CPU_HZ, type OctetBudget } from '../timing/budget';
import type { ClockSpread } from '../timing/clock-spread';
import { countValues } from '../timing/stats';
import type { DecodedFrame, FrameKind, FrameStatus, LineEvent } from '../types';
import { ANOMALY_KINDS, FrameWindowIndex, type AnomalyKind, type FrameRef, type LineAnomaly } from './anomalies';
import {
  binFaults,
  DAMAGE_CAUSES,
  diagnoseFrame,
  frameLineBits,
  WIRE_DAMAGE,
  type CallKeyLookup,
  type DamageCause,
  type FaultBins,
  type FrameDiagnosis,
  type SuspectBit,
} from './classify';
import { findOverruns, summarizeOverruns, type OverrunFinding } from './overrun';
import type { OctetTimingDetail, RaceDetail, RaceSummary, UnderrunDetail } from './races';
import { refOf, underrunOffset, UnderrunWatch, type CallShapeLookup, type UnderrunFinding } from './underrun';

export * from './anomalies';
export * from './classify';
export * from './overrun';
export * from './race-words';
export * from './races';
export * from './underrun';

/** A frame that came after a damaged one. */
export interface FollowerRef extends FrameRef {
  firstSample: number;
  status: FrameStatus;
}

/**
 * found: `retransmission` is set; not-found: the station sent `lookahead` frames on the link without
 * repeating it; capture-ended: the capture ended before `lookahead` frames of the station came;
 * not-applicable: nothing to match on (not an I frame and no call-layer key: S/U frames,
 * unreadable damage), or a good frame.
 */
export const RETRANSMISSION_SEARCHES = ['found', 'not-found', 'capture-ended', 'not-applicable'] as const;
export type RetransmissionSearch = (typeof RETRANSMISSION_SEARCHES)[number];
/** how a retransmission was matched: by the call layer's key, or by the I frame's N(S) */
export const RETRANSMISSION_MATCHES = ['call', 'ns'] as const;

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
  kind: FrameKind | null;
  command: string | null;
  ns: number | null;
  /** station and link fields read from the bytes with the flipped bit put back */
  corrected: boolean;
  callKey: string | null;
  /** line anomalies inside the frame's window, in sample order */
  anomalies: LineAnomaly[];
  /** the next frame on the same link from the same station (any status) */
  next: FollowerRef | null;
  retransmission: (FollowerRef & { by: (typeof RETRANSMISSION_MATCHES)[number] }) | null;
  retransmissionSearch: RetransmissionSearch;
  /** what shows a race signature (the race causes; octet timing also on damaged frames), else null */
  race: RaceDetail | null;
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
  /** the capture-wide side of the race signatures: offsets, repeats, clock spread, budget */
  races: RaceSummary;
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
  /**
   * The field map's view of a frame's octets (callShapeFromFieldMap): finds frames cut shorter
   * than their layout (transmitter under-runs). Without it only a fragment following at once, or
   * aborts recurring at one offset, show an under-run.
   */
  callShape?: CallShapeLookup;
  /** bit times after a cut frame within which a fragment follows it "at once" (default 40) */
  fragmentGapBits?: number;
  /** CPU clock for the budget line, Hz (default 4 MHz; the rig's setting when it has one) */
  cpuHz?: number;
  /** the capture settings' bit rate: the budget's rate when neither the clock nor the frames show one */
  bitRate?: number;
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
  private readonly underruns: UnderrunWatch;
  private readonly meter = new BitRateMeter();
  /** octet offset of every aborted frame's row, for the recurring-offset rule */
  private readonly abortOffsets = new Map<number, number>();
  private readonly exchanges: Exchange[] = [];
  private spread: ClockSpread | null = null;

  constructor(private readonly options: FaultDeskOptions) {
    this.lookahead = Math.max(1, options.lookahead ?? 8);
    this.fcsOctets = options.fcs === 32 ? 4 : 2;
    this.underruns = new UnderrunWatch({ fcsOctets: this.fcsOctets, shape: options.callShape, fragmentGapBits: options.fragmentGapBits });
  }

  /**
   * A decoded frame, in time order per link. `bitSamples` (sample of each line bit after the
   * opening flag), when the caller has them, makes the suspect bit's position exact.
   */
  frame(f: DecodedFrame, bitSamples?: ArrayLike<number> | null): void {
    this.frames++;
    if (f.lastSample > this.endSample) this.endSample = f.lastSample;
    this.meter.frame(f);
    // what this frame says about the one before it on the link: decided first, so a cut frame's row
    // waits for its retransmission from this frame on
    const cut = this.underruns.frame(f);
    if (cut) this.markCut(cut);
    const fragment = cut !== null && cut.fragment === f;
    const diag = f.status !== 'ok' || fragment ? this.diagnose(f, bitSamples) : null;
    // identity of this frame as a possible follower: the address (corrected when one bit explains a bad FCS)
    const station = diag ? diag.station : f.decode ? f.decode.address : f.bytes.length > 0 ? f.bytes[0] : null;
    this.windows.add(f.link, f.seq, f.firstSample, f.lastSample, station ?? -1, frameLineBits(f));
    if (station !== null) this.follow(f, station, diag ? { kind: diag.kind, ns: diag.ns, key: diag.callKey } : null);
    if (!diag) return;
    const index = this.addRow(f, diag, !fragment);
    if (f.status === 'abort') this.abortOffsets.set(index, underrunOffset(f, this.fcsOctets));
    if (fragment) {
      const row = this.rows[index];
      row.cause = 'underrun-fragment';
      row.race = { kind: 'underrun-fragment', of: refOf(cut.frame), octets: Math.max(0, f.bytes.length - (f.status === 'abort' ? 0 : this.fcsOctets)), rejoins: cut.rejoins };
      // not the station's own frame: nothing to retransmit
      row.retransmissionSearch = 'not-applicable';
    }
  }

  private diagnose(f: DecodedFrame, bitSamples?: ArrayLike<number> | null): FrameDiagnosis {
    return diagnoseFrame(f, { fcsOctets: this.fcsOctets, callKey: this.options.callKey, bitSamples });
  }

  private addRow(f: DecodedFrame, diag: FrameDiagnosis, followed = true): number {
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
      race: null,
    };
    const index = this.rows.push(row) - 1;
    this.rowOf.set(refKey(f.link, f.seq), index);
    if (followed && diag.station !== null) {
      const key = stationKey(f.link, diag.station);
      const list = this.pending.get(key);
      if (list) list.push({ row: index, seen: 0 });
      else this.pending.set(key, [{ row: index, seen: 0 }]);
    }
    return index;
  }

  /** the cut frame's row (made now when it checked good) with its under-run detail */
  private markCut(cut: UnderrunFinding): void {
    const at = this.rowOf.get(refKey(cut.frame.link, cut.frame.seq));
    const row = this.rows[at ?? this.addRow(cut.frame, this.diagnose(cut.frame))];
    const shape = cut.shape?.known ? cut.shape : null;
    row.cause = 'tx-underrun';
    row.race = {
      kind: 'tx-underrun',
      end: cut.end,
      octetOffset: cut.octetOffset,
      expectedOctets: shape ? shape.expectedOctets : null,
      field: shape ? shape.truncatedField : null,
      fieldOctets: shape ? shape.fieldOctets : null,
      evidence: cut.evidence,
      fragment: cut.fragment ? refOf(cut.fragment) : null,
    };
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

  /**
   * An exchange from the call layer, when it runs beside the desk: the requests among them that
   * crossed the line intact and were still lost are receiver over-run symptoms.
   */
  exchange(e: Exchange): void {
    this.exchanges.push(e);
  }

  /** the clock's period spread from the anomaly tap (the desk stands where an AnomalySink is expected) */
  clockSpread(s: ClockSpread): void {
    this.spread = s;
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
      let by: (typeof RETRANSMISSION_MATCHES)[number] | null = null;
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
    for (const cut of this.underruns.finish()) this.markCut(cut);
    this.recurringAborts();
    const rows = this.rows;
    const extra: FaultRow[] = [];
    const extraOf = new Map<string, FaultRow>();
    const outside: LineAnomaly[] = [];
    const sorted = [...this.anomalies].sort((a, b) => a.sample - b.sample || a.endSample - b.endSample);
    const inFrames = new Map<AnomalyKind, number>();
    const outsideCount = new Map<AnomalyKind, number>();
    const binned: number[] = [];
    const lineBits = new Map<FaultRow, number>();
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
        lineBits.set(row, h.bits);
        row.anomalies.push(a);
      }
    }
    const timingFrames = this.octetTiming([...rows, ...extra], lineBits);
    const overruns = this.overruns(rows, extra, extraOf);
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
      races: {
        underruns: summarizeUnderruns(all),
        overruns: summarizeOverruns(overruns),
        octetTiming: { frames: timingFrames, clock: this.spread },
        budget: this.budget(),
      },
    };
  }

  /** Aborts that strike a link at the same octet offset as another cut frame of the link are under-runs. */
  private recurringAborts(): void {
    const count = new Map<string, number>();
    const offsetOf = (r: FaultRow, index: number): number | null =>
      r.race?.kind === 'tx-underrun' ? r.race.octetOffset : r.cause === 'abort' ? (this.abortOffsets.get(index) ?? null) : null;
    this.rows.forEach((r, i) => {
      const o = offsetOf(r, i);
      if (o !== null) count.set(`${r.link}\u0000${o}`, (count.get(`${r.link}\u0000${o}`) ?? 0) + 1);
    });
    this.rows.forEach((r, i) => {
      if (r.cause !== 'abort') return;
      const o = offsetOf(r, i)!;
      if ((count.get(`${r.link}\u0000${o}`) ?? 0) < 2) return;
      r.cause = 'tx-underrun';
      r.race = { kind: 'tx-underrun', end: 'abort', octetOffset: o, expectedOctets: null, field: null, fieldOctets: null, evidence: ['recurring-offset'], fragment: null };
    });
  }

  /** Octet timing details on every row with stretched or missing clock periods; a good frame with only those gets its own cause. */
  private octetTiming(rows: FaultRow[], lineBits: Map<FaultRow, number>): number {
    let frames = 0;
    for (const r of rows) {
      const clock = r.anomalies.filter((a) => a.kind === 'clock-stretch' || a.kind === 'clock-missing');
      if (clock.length === 0) continue;
      frames++;
      const bits = lineBits.get(r) ?? 0;
      const span = r.lastSample - r.firstSample;
      const detail: OctetTimingDetail = {
        kind: 'octet-timing',
        stretched: clock.filter((a) => a.kind === 'clock-stretch').length,
        missing: clock.filter((a) => a.kind === 'clock-missing').reduce((n, a) => n + a.count, 0),
        longestBits: clock.reduce((m, a) => Math.max(m, a.kind === 'clock-missing' ? a.bits + 1 : a.bits), 0),
        // where the long period ended, spread evenly over the frame's line bits (stuffing ignored)
        octets: clock.map((a) => (span > 0 && bits > 1 ? Math.max(0, Math.min(bits - 1, Math.round(((a.endSample - r.firstSample) / span) * (bits - 1)))) >> 3 : 0)),
      };
      if (r.race === null) r.race = detail;
      if (r.cause === 'line-anomaly' && clock.length === r.anomalies.length) r.cause = 'octet-timing';
    }
    return frames;
  }

  /** Receiver over-run symptoms among the exchanges: rows with their own cause on the request. */
  private overruns(rows: FaultRow[], extra: FaultRow[], extraOf: Map<string, FaultRow>): OverrunFinding[] {
    if (this.exchanges.length === 0) return [];
    const byStation = new Map<number, number[]>();
    const byLink = new Map<string, number[]>();
    for (const r of rows) {
      if (!WIRE_DAMAGE.has(r.cause)) continue;
      if (r.station !== null) (byStation.get(r.station) ?? byStation.set(r.station, []).get(r.station)!).push(r.firstSample);
      (byLink.get(r.link) ?? byLink.set(r.link, []).get(r.link)!).push(r.firstSample);
    }
    for (const list of [...byStation.values(), ...byLink.values()]) list.sort((a, b) => a - b);
    const any = (list: number[] | undefined, from: number, to: number) => {
      if (!list) return false;
      let lo = 0;
      let hi = list.length;
      while (lo < hi) {
        const mid = (lo + hi) >> 1;
        if (list[mid] < from) lo = mid + 1;
        else hi = mid;
      }
      return lo < list.length && list[lo] <= to;
    };
    // the links each station's exchanges used: damage there counts even when its address was hit
    const linksOf = new Map<number, Set<string>>();
    for (const e of this.exchanges) {
      const set = linksOf.get(e.station) ?? linksOf.set(e.station, new Set()).get(e.station)!;
      set.add(e.request.link);
      for (const r of e.responses) set.add(r.link);
    }
    const found = findOverruns(this.exchanges, (station, from, to) => {
      if (any(byStation.get(station), from, to)) return true;
      for (const link of linksOf.get(station) ?? []) if (any(byLink.get(link), from, to)) return true;
      return false;
    });
    for (const o of found) {
      const key = refKey(o.request.link, o.request.seq);
      const at = this.rowOf.get(key);
      let row = at !== undefined ? rows[at] : extraOf.get(key);
      if (!row) {
        const w = this.windows.byRef(o.request.link, o.request.seq);
        row = goodFrameRow(o.request.link, o.request.seq, w ? w.first : o.firstSample, w ? w.last : o.firstSample, o.detail.station);
        extra.push(row);
        extraOf.set(key, row);
      }
      row.cause = 'rx-overrun';
      row.race = o.detail;
    }
    return found;
  }

  /** time and cycles per octet at the clock's rate, else the frames', else the settings' */
  private budget(): OctetBudget | null {
    const cpu = this.options.cpuHz ?? DEFAULT_CPU_HZ;
    if (this.spread) return octetBudget(this.spread.bitRate, cpu, 'clock');
    const measured = this.meter.bitRate(this.options.samplePeriodSeconds);
    if (measured) return octetBudget(measured, cpu, 'frames');
    return this.options.bitRate ? octetBudget(this.options.bitRate, cpu, 'nominal') : null;
  }
}

/** The under-run part of the race summary, from the rows. */
function summarizeUnderruns(rows: readonly FaultRow[]): RaceSummary['underruns'] {
  const cuts = rows.map((r) => r.race).filter((d): d is UnderrunDetail => d?.kind === 'tx-underrun');
  const offsets = countValues(cuts.map((d) => d.octetOffset))
    .map(({ value, count }) => ({ offset: value, count }))
    .sort((a, b) => a.offset - b.offset);
  const top = countValues(cuts.map((d) => d.octetOffset))[0];
  return {
    count: cuts.length,
    endedWithFcs: cuts.filter((d) => d.end === 'fcs').length,
    endedWithAbort: cuts.filter((d) => d.end === 'abort').length,
    fragments: rows.filter((r) => r.cause === 'underrun-fragment').length,
    offsets,
    recurring: top && top.count >= 2 ? { offset: top.value, count: top.count, share: top.count / cuts.length } : null,
  };
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
    race: null,
  };
}

function focusOf(r: FaultRow): number | null {
  if (r.suspect) return r.suspect.sample;
  if (r.anomalies.length > 0) return Math.max(r.firstSample, r.anomalies[0].sample);
  // where the frame broke off
  if (r.cause === 'abort' || r.cause === 'residue' || r.cause === 'tx-underrun') return r.lastSample;
  return null;
}

const refKey = (link: string, seq: number) => `${link}\u0000${seq}`;
const stationKey = (link: string, station: number) => `${link}\u0000${station}`;
