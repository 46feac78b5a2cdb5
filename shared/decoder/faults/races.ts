// Race signatures: patterns that point at a timing race rather than at the line. Each has its own
// cause in the fault desk (classify.ts) and a detail on the frame's row saying what shows it:
//   tx-underrun        a transmitter under-run: the sender's CPU did not feed its serial controller
//                      in time, so the frame stops early — closed with a valid FCS (controllers that
//                      send the FCS when their transmit buffer runs dry) or with an abort (seven or
//                      more 1s, ISO/IEC 13239) — shorter than its layout says, often followed at once
//                      by a fragment (the rest of the octets as a frame of their own)
//   underrun-fragment  that fragment: a frame right after the cut one that does not parse as the
//                      station's own
//   rx-overrun         receiver over-run symptoms: a request that arrived intact but was retried,
//                      left unanswered and asked again, or answered with an error that went away
//                      when asked again — the receiving CPU did not drain its controller in time
//   octet-timing       a frame that checks good but whose clock had stretched or missing periods
// The summary (RaceSummary) adds what only the whole capture shows: the histogram of the octet
// offsets where under-runs struck (a race in a send loop tends to strike at the same place), the
// over-run symptoms grouped by record and by request size, the clock's period spread, and the
// budget line (time and CPU cycles per octet).
import type { OctetBudget } from '../timing/budget';
import type { ClockSpread } from '../timing/clock-spread';
import type { FrameRef } from './anomalies';

/** What made the desk call a cut frame an under-run. */
export type UnderrunEvidence =
  /** the frame ends inside a field of its layout (a 128-byte record field holding fewer octets) */
  | 'layout'
  /** a fragment that does not parse came at once after it */
  | 'fragment'
  /** the cut octets and the fragment's octets together make the whole layout */
  | 'rejoins'
  /** an abort at the same octet offset as other cut frames of the link */
  | 'recurring-offset';

export interface UnderrunDetail {
  kind: 'tx-underrun';
  /** how the frame ended: a valid FCS over what was sent, or an abort */
  end: 'fcs' | 'abort';
  /** octets of the frame (address first, FCS not counted) that went out before the cut */
  octetOffset: number;
  /** octets the layout needs from the address to the end of its last field; null when it ends in an open-length field or no layout is known */
  expectedOctets: number | null;
  /** id of the layout field the frame stops in (or before), when a field map is known */
  field: string | null;
  /** octets of that field present, and its length */
  fieldOctets: { present: number; length: number } | null;
  evidence: UnderrunEvidence[];
  fragment: FrameRef | null;
}

export interface FragmentDetail {
  kind: 'underrun-fragment';
  /** the cut frame it continues */
  of: FrameRef;
  /** octets of the fragment (FCS not counted) */
  octets: number;
  /** true when the cut frame and this one together make the whole layout */
  rejoins: boolean;
}

export type OverrunSymptom =
  /** answered with a status that changed when the same request was sent again */
  | 'error-answer'
  /** sent again before any answer although no frame of the exchange was damaged */
  | 'retried-clean'
  /** never answered, then asked again, with nothing damaged on the wire */
  | 'unanswered-clean';

export interface OverrunDetail {
  kind: 'rx-overrun';
  symptom: OverrunSymptom;
  station: number;
  callCode: number | null;
  callName: string | null;
  fileName: string | null;
  recordNumber: number | null;
  /** information-field octets of the request */
  requestOctets: number;
  /** the status of the answer that went away (error-answer) */
  status: number | null;
  /** the answer (error-answer), the retry (retried-clean) or the request sent again (unanswered-clean) */
  then: FrameRef | null;
  /** symptoms in the capture at the same station, call, file and record (this one included) */
  sameRecord: number;
  /** symptoms in the capture with requests of the same size (this one included) */
  sameSize: number;
}

export interface OctetTimingDetail {
  kind: 'octet-timing';
  /** clock periods inside the frame at least the stretch fraction long */
  stretched: number;
  /** clock edges missing inside the frame */
  missing: number;
  /** the longest period inside the frame, in bit times */
  longestBits: number;
  /** octet of the frame (interpolated from its first and last bit) where each stretched or missing period ended */
  octets: number[];
}

export type RaceDetail = UnderrunDetail | FragmentDetail | OverrunDetail | OctetTimingDetail;

export interface OffsetCount {
  offset: number;
  count: number;
}

export interface RaceSummary {
  underruns: {
    count: number;
    endedWithFcs: number;
    endedWithAbort: number;
    fragments: number;
    /** under-runs per octet offset, by offset */
    offsets: OffsetCount[];
    /** the offset most of them struck at, when at least two share it */
    recurring: (OffsetCount & { share: number }) | null;
  };
  overruns: {
    count: number;
    bySymptom: Record<OverrunSymptom, number>;
    /** symptoms per request size (information-field octets), most first */
    bySize: { octets: number; count: number }[];
    /** symptoms per station, call, file and record, most first (the first 20) */
    byRecord: { station: number; callName: string | null; fileName: string | null; recordNumber: number | null; count: number }[];
    /** true when two or more symptoms share a record or a request size */
    repeating: boolean;
  };
  octetTiming: {
    /** frames with stretched or missing clock periods inside (any status) */
    frames: number;
    /** the clock's period spread; null when the capture has no clock channel */
    clock: ClockSpread | null;
  };
  /** time and CPU cycles per octet at the measured bit rate; null when no rate could be measured or was given */
  budget: OctetBudget | null;
}
