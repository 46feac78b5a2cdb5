// Diagnosis of one damaged frame: its cause, where on the line the suspect bit sits, and what
// to look for in the frames that follow (the station and the N(S) or call-layer key a
// retransmission would carry).
import { decodeFrameCall, type CallDirection } from '../calls/apply';
import type { FieldMap } from '../calls/field-map';
import { decodeLink } from '../link';
import type { DecodedFrame, FrameKind, FrameStatus } from '../types';

/**
 * Causes, from the frame status:
 *   bad-fcs-explained    bad FCS and one flipped bit makes it good (CRC syndrome, see fcs.ts)
 *   bad-fcs-unexplained  bad FCS that no single bit explains (two or more bits, or bits lost or gained)
 *   abort / short / residue as the deframer decided them
 *   line-anomaly         the frame checks good but a line anomaly falls inside it
 * and the race signatures (races.ts), which take precedence over the status:
 *   tx-underrun          a transmitter under-run: a frame cut short (valid FCS or abort)
 *   underrun-fragment    the fragment that followed a cut frame at once
 *   rx-overrun           a request that crossed the line intact and was lost in the receiver
 *   octet-timing         a good frame with stretched or missing clock periods inside
 */
export const DAMAGE_CAUSES = [
  'bad-fcs-explained',
  'bad-fcs-unexplained',
  'abort',
  'short',
  'residue',
  'line-anomaly',
  // race signatures (races.ts)
  'tx-underrun',
  'underrun-fragment',
  'rx-overrun',
  'octet-timing',
] as const;
export type DamageCause = (typeof DAMAGE_CAUSES)[number];

/** The race signatures among the causes. */
export const RACE_CAUSES: readonly DamageCause[] = ['tx-underrun', 'underrun-fragment', 'rx-overrun', 'octet-timing'];

/** Causes that mean a frame did not cross the line as sent (what an over-run symptom must not have). */
export const WIRE_DAMAGE: ReadonlySet<DamageCause> = new Set<DamageCause>(['bad-fcs-explained', 'bad-fcs-unexplained', 'abort', 'short', 'residue', 'tx-underrun', 'underrun-fragment']);

/** The cause a frame's status gives; null for a good frame (it may still carry a line anomaly). */
export function damageCause(f: Pick<DecodedFrame, 'status' | 'flippedBit'>): DamageCause | null {
  switch (f.status) {
    case 'ok':
      return null;
    case 'bad-fcs':
      return f.flippedBit !== null ? 'bad-fcs-explained' : 'bad-fcs-unexplained';
    default:
      return f.status;
  }
}

/**
 * Destuffed bit index → line bit index (counted from the first bit after the opening flag):
 * every stuffed zero at or before the position pushes it one further. `stuffed` holds the line
 * positions of the deleted zeros in increasing order (RawFrame.stuffed).
 */
export function destuffedToLineBit(destuffedBit: number, stuffed: readonly number[]): number {
  let line = destuffedBit;
  for (let k = 0; k < stuffed.length; k++) {
    if (stuffed[k] <= line) line++;
    else break;
  }
  return line;
}

/** Line bits between the flags: data bits plus the stuffed zeros. */
export function frameLineBits(f: Pick<DecodedFrame, 'bitLength' | 'stuffed'>): number {
  return f.bitLength + f.stuffed.length;
}

export interface SuspectBit {
  /** index in destuffed transmission order (DecodedFrame.flippedBit) */
  destuffedBit: number;
  /** index in line bits after the opening flag */
  lineBit: number;
  sample: number;
  /**
   * true when taken from the per-bit sample list; false when interpolated: the frame's line bits
   * are spread evenly from firstSample (line bit 0) to lastSample (the last data bit), which is
   * exact for a steady clock and off by the clock's wander otherwise (jitter, missing or extra
   * edges inside the frame shift it — the view should draw a few bits either side)
   */
  exact: boolean;
}

/**
 * Where the flipped bit of an explained bad FCS was on the line. `bitSamples[k]`, when given,
 * is the sample at which line bit k of the frame was taken.
 */
export function suspectBit(
  f: Pick<DecodedFrame, 'flippedBit' | 'stuffed' | 'bitLength' | 'firstSample' | 'lastSample'>,
  bitSamples?: ArrayLike<number> | null,
): SuspectBit | null {
  if (f.flippedBit === null) return null;
  const lineBit = destuffedToLineBit(f.flippedBit, f.stuffed);
  if (bitSamples && lineBit < bitSamples.length) {
    return { destuffedBit: f.flippedBit, lineBit, sample: bitSamples[lineBit], exact: true };
  }
  // lastSample is the last data bit: a 0 stuffed after it lies past the span
  const all = frameLineBits(f);
  const total = f.stuffed.length > 0 && f.stuffed[f.stuffed.length - 1] === all - 1 ? all - 1 : all;
  const span = f.lastSample - f.firstSample;
  const sample = total > 1 ? Math.round(f.firstSample + (span * lineBit) / (total - 1)) : f.firstSample;
  return { destuffedBit: f.flippedBit, lineBit, sample, exact: false };
}

/** A copy of an explained bad-FCS frame with the flipped bit put back: good FCS, link fields re-read. */
export function correctedFrame(f: DecodedFrame, fcsOctets = 2): DecodedFrame | null {
  if (f.status !== 'bad-fcs' || f.flippedBit === null) return null;
  const bytes = f.bytes.slice();
  bytes[f.flippedBit >> 3] ^= 1 << (f.flippedBit & 7);
  const dataLength = bytes.length - fcsOctets;
  return {
    ...f,
    bytes,
    status: 'ok',
    flippedBit: null,
    fcsReceived: fcsOctets === 2 ? bytes[dataLength] | (bytes[dataLength + 1] << 8) : f.fcsReceived,
    decode: decodeLink(bytes, dataLength >= 2 ? dataLength : bytes.length),
  };
}

/**
 * Gives a frame's call-layer identity (e.g. "call:tag") or null. It is called with good frames
 * and with corrected copies of explained bad-FCS frames (status 'ok'), never with bytes nobody
 * can trust.
 */
export type CallKeyLookup = (frame: DecodedFrame) => string | null;

/** A CallKeyLookup from a field map: call code and tag, for maps that have both. */
export function callKeyFromFieldMap(map: FieldMap, directionOf: (link: string) => CallDirection): CallKeyLookup {
  return (frame) => {
    const call = decodeFrameCall(map, frame, directionOf(frame.link));
    if (!call || call.callCode === null || call.tag === null) return null;
    // keys are compared only between frames of one link, so a request never meets its response
    return `${call.callCode}:${call.tag}`;
  };
}

/** What a damaged frame tells about itself and its sender. */
export interface FrameDiagnosis {
  cause: DamageCause;
  /** address octet: from the corrected bytes when one bit explains the FCS, else as received (may itself be damaged) */
  station: number | null;
  /** link fields from the same bytes */
  kind: FrameKind | null;
  command: string | null;
  ns: number | null;
  /** true when station/kind/N(S) come from the corrected bytes */
  corrected: boolean;
  /** the call-layer key of the frame, when a lookup was given and the bytes can be trusted */
  callKey: string | null;
  suspect: SuspectBit | null;
}

export interface DiagnoseOptions {
  fcsOctets?: 2 | 4;
  callKey?: CallKeyLookup;
  bitSamples?: ArrayLike<number> | null;
}

export function diagnoseFrame(f: DecodedFrame, options: DiagnoseOptions = {}): FrameDiagnosis {
  const cause = damageCause(f) ?? 'line-anomaly';
  const fixed = correctedFrame(f, options.fcsOctets ?? 2);
  const view = fixed ?? f;
  const d = view.decode;
  // an aborted or short frame may still hold its address octet
  const station = d ? d.address : view.bytes.length >= 1 ? view.bytes[0] : null;
  let callKey: string | null = null;
  if (options.callKey && view.status === 'ok') callKey = options.callKey(view);
  return {
    cause,
    station,
    kind: d ? d.kind : null,
    command: d ? d.command : null,
    ns: d ? d.ns : null,
    corrected: fixed !== null,
    callKey,
    suspect: suspectBit(f, options.bitSamples),
  };
}

/** Status codes for compact per-frame storage. */
export const STATUS_CODES: readonly FrameStatus[] = ['ok', 'bad-fcs', 'abort', 'short', 'residue'];

// ---- counts over time ----

export interface FaultBins {
  /** width of a bin in samples (and seconds) */
  binSamples: number;
  binSeconds: number;
  /** first sample of each bin */
  start: number[];
  /** damaged frames per bin, by cause (a frame counts once, in the bin of its first bit) */
  byCause: Record<DamageCause, number[]>;
  /** damaged frames per bin, all causes together */
  frames: number[];
  /** line anomalies per bin (inside frames or not, silences only inside), by where they start */
  anomalies: number[];
}

/**
 * Counts over time so a user sees whether damage clusters: `binCount` equal bins from sample 0
 * to `endSample` (inclusive).
 */
export function binFaults(
  rows: readonly { firstSample: number; cause: DamageCause }[],
  anomalySamples: readonly number[],
  endSample: number,
  samplePeriodSeconds: number,
  binCount = 48,
): FaultBins {
  const count = Math.max(1, Math.floor(binCount));
  const binSamples = Math.max(1, Math.ceil((Math.max(0, endSample) + 1) / count));
  const zero = () => new Array<number>(count).fill(0);
  const byCause = Object.fromEntries(DAMAGE_CAUSES.map((c) => [c, zero()])) as Record<DamageCause, number[]>;
  const frames = zero();
  const anomalies = zero();
  const bin = (s: number) => Math.min(count - 1, Math.max(0, Math.floor(s / binSamples)));
  for (const r of rows) {
    const b = bin(r.firstSample);
    byCause[r.cause][b]++;
    frames[b]++;
  }
  for (const s of anomalySamples) anomalies[bin(s)]++;
  return {
    binSamples,
    binSeconds: binSamples * samplePeriodSeconds,
    start: Array.from({ length: count }, (_, i) => i * binSamples),
    byCause,
    frames,
    anomalies,
  };
}
