import { Link } from 'react-router';
import { formatDuration } from '../../../components/units';
import type { TimelineCallMarker } from '../../../../shared/schemas';

const roleMarks: Record<TimelineCallMarker['role'], { mark: string; word: string }> = {
  request: { mark: '→', word: 'request' },
  retry: { mark: '↻', word: 'retry' },
  response: { mark: '←', word: 'answer' },
  // a bad-FCS answer the station answered with a retry: why the exchange was retried
  'damaged-response': { mark: '✗', word: 'damaged answer' },
};

function timing(e: TimelineCallMarker): string {
  if (e.rttSeconds !== null) return formatDuration(e.rttSeconds);
  return e.outcome === 'unanswered' ? 'no answer' : '—';
}

/** The frame's part in an exchange: call name and round trip, linking to the exchange in the schedule. */
export function CallMarker({ exchange, href }: { exchange: TimelineCallMarker; href: string }) {
  const role = roleMarks[exchange.role];
  const damaged = exchange.role === 'damaged-response';
  const text = damaged ? `${exchange.callName} · damaged answer, retried` : `${exchange.callName} · ${timing(exchange)}`;
  return (
    <Link
      to={href}
      data-exchange-id={exchange.exchangeId}
      data-call-role={exchange.role}
      title={`${role.word} of exchange ${exchange.exchangeId}: ${text} (open in the schedule)`}
      aria-label={`${role.word}: ${text}, open in the schedule`}
      onClick={(e) => e.stopPropagation()}
      className={`mr-2 shrink-0 rounded border border-line px-1 text-[11.5px] hover:underline ${exchange.outcome === 'unanswered' || damaged ? 'text-[#e0582f]' : 'text-link'}`}
    >
      <span aria-hidden className="mr-1 text-muted">
        {role.mark}
      </span>
      {text}
    </Link>
  );
}
