// The words the fault desk shows for race signatures: a title and an explanation per cause, and
// one sentence per row from its detail. Kept beside the detection so the server's diagnosis, the
// views and the CLI say the same thing.
import type { OctetBudget } from '../timing/budget';
import type { RaceDetail } from './races';

export type RaceCause = 'tx-underrun' | 'underrun-fragment' | 'rx-overrun' | 'octet-timing';

export const RACE_CAUSE_WORDS: Record<RaceCause, { title: string; explanation: string }> = {
  'tx-underrun': {
    title: 'Transmitter under-run',
    explanation:
      'The sending CPU did not give its serial controller the next octet in time, so the controller ended the frame early: ' +
      'with an FCS over what it had sent (a frame that checks good but is shorter than its layout) or with an abort. ' +
      'The rest often follows at once as a fragment of its own. A race in a send loop tends to strike at the same octet offset every time.',
  },
  'underrun-fragment': {
    title: 'Fragment after an under-run',
    explanation: 'The octets the sender still had after its frame was cut, sent at once as a frame of their own: it does not parse as the station’s frame.',
  },
  'rx-overrun': {
    title: 'Receiver over-run symptom',
    explanation:
      'A request crossed the line intact, yet it was retried, left unanswered or answered with an error that went away when asked again: ' +
      'the receiving CPU did not drain its serial controller in time. Symptoms that repeat at the same record or request size point at the receive loop.',
  },
  'octet-timing': {
    title: 'Octet timing',
    explanation: 'The frame checks good, but its clock had periods stretched or missing inside it: the transmitter’s clock was held while the frame went out.',
  },
};

const us = (s: number) => `${(s * 1e6).toFixed(s < 1e-5 ? 2 : 1)} µs`;

/** One sentence about a row's race detail, with the budget line when it helps. */
export function describeRace(d: RaceDetail, budget?: OctetBudget | null): string {
  switch (d.kind) {
    case 'tx-underrun': {
      const ended = d.end === 'fcs' ? 'closed with a valid FCS' : 'aborted';
      const of = d.expectedOctets !== null ? ` of the ${d.expectedOctets} its layout needs` : '';
      const field = d.field && d.fieldOctets ? ` (field “${d.field}” holds ${d.fieldOctets.present} of ${d.fieldOctets.length} octets)` : '';
      const why: string[] = [];
      if (d.evidence.includes('layout')) why.push('shorter than its layout');
      if (d.evidence.includes('fragment')) why.push(`frame ${d.fragment?.seq} followed at once as a fragment${d.evidence.includes('rejoins') ? ' that completes it' : ''}`);
      if (d.evidence.includes('recurring-offset')) why.push('other frames of the link were cut at the same offset');
      const time = budget ? ` — ${us(d.octetOffset * budget.octetSeconds)} into the frame at ${us(budget.octetSeconds)} per octet` : '';
      return `Cut short after ${d.octetOffset} octets${of}${field} and ${ended}${time}: ${why.join('; ')}.`;
    }
    case 'underrun-fragment':
      return `${d.octets} octets sent at once after frame ${d.of.seq} was cut short${d.rejoins ? '; with it they make the whole message' : ''}.`;
    case 'rx-overrun': {
      const what = [d.callName ?? (d.callCode !== null ? `call ${d.callCode}` : 'request'), d.fileName, d.recordNumber !== null ? `record ${d.recordNumber}` : null].filter(Boolean).join(' ');
      const how =
        d.symptom === 'retried-clean'
          ? 'was sent again before any answer, though nothing on the wire was damaged'
          : d.symptom === 'unanswered-clean'
            ? 'got no answer and was asked again, with nothing damaged on the wire'
            : `was answered with status ${d.status}, which went away when it was asked again`;
      const repeats = [d.sameRecord > 1 ? `${d.sameRecord} times at this record` : null, d.sameSize > 1 ? `${d.sameSize} times at requests of ${d.requestOctets} octets` : null].filter(Boolean);
      return `The ${what} (${d.requestOctets} octets) ${how}${repeats.length ? `; seen ${repeats.join(' and ')}` : ''}.`;
    }
    case 'octet-timing': {
      const parts = [d.stretched ? `${d.stretched} stretched clock period${d.stretched === 1 ? '' : 's'}` : null, d.missing ? `${d.missing} missing clock edge${d.missing === 1 ? '' : 's'}` : null].filter(Boolean);
      return `${parts.join(' and ')} inside the frame (longest ${d.longestBits.toFixed(2)} bit times), at octet${d.octets.length === 1 ? '' : 's'} ${[...new Set(d.octets)].join(', ')}.`;
    }
  }
}
