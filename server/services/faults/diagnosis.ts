import { describeRace, RACE_CAUSE_WORDS } from '../../../shared/decoder/faults';
import type { RaceDetail } from '../../../shared/decoder/faults';
import type { OctetBudget } from '../../../shared/decoder/timing';
import type { DamageCauseName, FaultAnomaly, FaultFrameRow } from '../../../shared/schemas';

// One sentence per fault row, in the words the fault desk shows.

const hex4 = (n: number) => `0x${n.toString(16).toUpperCase().padStart(4, '0')}`;

const ANOMALY_WORDS: Record<FaultAnomaly['kind'], (a: FaultAnomaly) => string> = {
  glitch: (a) => `${a.count === 1 ? 'a pulse' : `${a.count} pulses`} shorter than half a bit on ${a.channel}`,
  'clock-missing': (a) => `${a.count === 1 ? 'a clock edge' : `${a.count} clock edges`} missing on ${a.channel}`,
  'clock-extra': (a) => `an extra clock edge on ${a.channel}`,
  'clock-stretch': (a) => `a clock period of ${a.bits.toFixed(2)} bit times on ${a.channel}`,
  silence: (a) => `${a.channel} silent for ${Math.round(a.bits)} bit times`,
  unknown: (a) => `${a.channel} at an unknown level`,
};

export interface FaultFacts {
  cause: DamageCauseName;
  fcsReceived: number | null;
  fcsComputed: number | null;
  flippedBit: number | null;
  suspectLineBit: number | null;
  /** stuffed zeros on the line before the suspect bit */
  stuffedBefore: number;
  anomalies: FaultAnomaly[];
  retransmissionSeq: number | null;
  retransmissionBy: 'call' | 'ns' | null;
  retransmissionSearch: FaultFrameRow['retransmissionSearch'];
  /** what shows the race signature, when the row has one */
  race?: RaceDetail | null;
  /** the run's budget line, for the time into the frame where an under-run struck */
  budget?: OctetBudget | null;
}

export function describeFault(f: FaultFacts): string {
  const parts: string[] = [];
  const fcs = f.fcsReceived !== null && f.fcsComputed !== null ? ` (received ${hex4(f.fcsReceived)}, computed ${hex4(f.fcsComputed)})` : '';
  switch (f.cause) {
    case 'bad-fcs-explained': {
      const stuffed = f.stuffedBefore > 0 ? `, line bit ${f.suspectLineBit} after ${f.stuffedBefore} stuffed zero${f.stuffedBefore === 1 ? '' : 's'}` : '';
      parts.push(`Bad FCS${fcs}: one flipped bit explains it — bit ${f.flippedBit} of the frame (octet ${(f.flippedBit ?? 0) >> 3}, bit ${(f.flippedBit ?? 0) & 7}${stuffed}).`);
      break;
    }
    case 'bad-fcs-unexplained':
      parts.push(`Bad FCS${fcs}: no single flipped bit explains it.`);
      break;
    case 'abort':
      parts.push('Aborted: seven or more 1s in a row inside the frame.');
      break;
    case 'short':
      parts.push('Short: fewer octets than address, control and FCS.');
      break;
    case 'residue':
      parts.push('Residue: the bits between the flags are not a whole number of octets (a bit lost or doubled).');
      break;
    case 'line-anomaly':
      parts.push('Good FCS, but the line misbehaved inside the frame.');
      break;
    case 'tx-underrun':
    case 'underrun-fragment':
    case 'rx-overrun':
    case 'octet-timing':
      // the row's own evidence when stored; the cause's general explanation for runs decoded before it was
      parts.push(`${RACE_CAUSE_WORDS[f.cause].title}: ${f.race ? describeRace(f.race, f.budget) : RACE_CAUSE_WORDS[f.cause].explanation}`);
      break;
  }
  // octet timing found on a frame with another cause (a bad FCS with a stretched clock period)
  if (f.race?.kind === 'octet-timing' && f.cause !== 'octet-timing') parts.push(`Octet timing: ${describeRace(f.race, f.budget)}`);
  if (f.anomalies.length > 0) parts.push(`On the line: ${f.anomalies.slice(0, 3).map((a) => ANOMALY_WORDS[a.kind](a)).join('; ')}${f.anomalies.length > 3 ? `; ${f.anomalies.length - 3} more` : ''}.`);
  if (f.retransmissionSearch === 'found') parts.push(`Sent again as frame ${f.retransmissionSeq} (${f.retransmissionBy === 'call' ? 'same call and tag' : 'same N(S)'}).`);
  else if (f.retransmissionSearch === 'not-found') parts.push('Not sent again in the frames that followed.');
  else if (f.retransmissionSearch === 'capture-ended') parts.push('The capture ended before a retransmission could show.');
  return parts.join(' ');
}
