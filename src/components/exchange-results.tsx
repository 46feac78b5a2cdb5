import { Link } from 'react-router';
import type { ExchangeLockConflict, ExchangeRow, LockConflictOutcome } from '../../shared/schemas';
import { formatAddress } from '../lib/format';

/** The schedule with this exchange chosen: every station, so an exchange of another station shows too. */
export function exchangeHref(captureBase: string, exchangeId: number): string {
  return `${captureBase}/schedule?${new URLSearchParams({ station: 'all', ex: String(exchangeId) })}`;
}

export const lockOutcomeWords: Record<LockConflictOutcome, string> = {
  granted: 'the server granted it, so both held the record',
  refused: 'the server refused it',
  unanswered: 'the server did not answer',
};

function lockLine(c: ExchangeLockConflict): string {
  const other = c.other.name ?? `station ${formatAddress(c.other.address)}`;
  return c.role === 'holder'
    ? `Lock conflict on record ${c.record}: ${other} asked for the lock this exchange holds; ${lockOutcomeWords[c.outcome]}.`
    : `Lock conflict on record ${c.record}: ${other} held the lock this exchange asked for; ${lockOutcomeWords[c.outcome]}.`;
}

interface Props {
  exchange: ExchangeRow;
  frameHref: (frameId: number) => string;
  /** Round trips with another exchange chosen */
  exchangeHref: (exchangeId: number) => string;
  /** one line each (exchange detail) or short marks (lists) */
  compact?: boolean;
}

/**
 * What the call layer found beside the exchange's own frames: damaged answers (bad-FCS answers
 * the station answered with a retry: why it was retried) and lock conflicts with other stations.
 */
export function ExchangeResults({ exchange: ex, frameHref, exchangeHref: otherHref, compact = false }: Props) {
  const damaged = ex.damagedResponseFrameIds ?? [];
  const locks = ex.lockConflicts ?? [];
  if (damaged.length === 0 && locks.length === 0) return null;
  if (compact) {
    return (
      <span className="ml-1 inline-flex flex-wrap gap-1 align-middle text-[11px]">
        {damaged.map((id) => (
          <Link key={id} to={frameHref(id)} data-testid="damaged-answer" title="A damaged (bad FCS) answer: why the station sent the request again" className="rounded border border-[#e0582f]/60 px-1 text-[#e0582f] hover:underline">
            damaged answer
          </Link>
        ))}
        {locks.map((c, i) => (
          <Link key={i} to={otherHref(c.otherExchangeId ?? ex.id)} data-testid="lock-conflict" title={lockLine(c)} className="rounded border border-flare-500/60 px-1 text-flare-700 hover:underline dark:text-flare-300">
            lock conflict · rec {c.record}
          </Link>
        ))}
      </span>
    );
  }
  return (
    <ul className="space-y-1 text-sm" aria-label="Call results of this exchange">
      {damaged.map((id, i) => (
        <li key={id} data-testid="damaged-answer">
          <span className="text-[#e0582f]">✗</span> The server's answer arrived damaged (bad FCS) and the station sent the request again:{' '}
          <Link to={frameHref(id)} className="text-link hover:underline">
            damaged answer{damaged.length > 1 ? ` ${i + 1}` : ''}
          </Link>
          .
        </li>
      ))}
      {locks.map((c, i) => (
        <li key={i} data-testid="lock-conflict">
          {lockLine(c)}{' '}
          {c.otherExchangeId !== null ? (
            <Link to={otherHref(c.otherExchangeId)} className="text-link hover:underline">
              Other station's lock exchange #{c.otherExchangeId}
            </Link>
          ) : null}
        </li>
      ))}
    </ul>
  );
}
