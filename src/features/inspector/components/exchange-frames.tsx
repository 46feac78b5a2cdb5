import { Link } from 'react-router';
import type { ExchangeRow } from '../../../../shared/schemas';
import { formatDuration, formatSeconds } from '../../../components/units';
import { formatAddress } from '../../../lib/format';
import { ExchangeResults } from '../../../components/exchange-results';

const outcomeWords: Record<ExchangeRow['outcome'], string> = {
  answered: 'answered',
  retried: 'answered after the station sent it again',
  unanswered: 'never answered',
};

interface Props {
  exchange: ExchangeRow;
  frameId: number;
  frameHref: (id: number) => string;
  roundTripsHref: string;
  /** Round trips with another exchange chosen (the other side of a lock conflict) */
  exchangeHref: (exchangeId: number) => string;
}

/** The exchange a frame belongs to: what it was, how it went, and every frame of it (this one marked). */
export function ExchangeFrames({ exchange: ex, frameId, frameHref, roundTripsHref, exchangeHref }: Props) {
  const frames: { id: number; role: string }[] = [
    ...(ex.requestFrameId === null ? [] : [{ id: ex.requestFrameId, role: 'request' }]),
    ...ex.retryFrameIds.map((id, i) => ({ id, role: ex.retryFrameIds.length > 1 ? `sent again (${i + 1})` : 'sent again' })),
    ...ex.responseFrameIds.map((id, i) => ({ id, role: ex.responseFrameIds.length > 1 ? `answer ${i + 1}` : 'answer' })),
    ...(ex.damagedResponseFrameIds ?? []).map((id, i, all) => ({ id, role: all.length > 1 ? `damaged answer ${i + 1}` : 'damaged answer' })),
  ];
  const station = ex.station.name ?? formatAddress(ex.station.address);
  const what = [ex.call.name ?? (ex.call.code === null ? 'call' : `call ${ex.call.code}`), ex.fileName, ex.recordNumber === null ? null : `record ${ex.recordNumber}`]
    .filter(Boolean)
    .join(' · ');
  return (
    <div className="space-y-2 text-sm" data-testid="frame-exchange">
      <p>
        <span className="font-medium">{what}</span> from {station} at {formatSeconds(ex.tRequest)} s: {outcomeWords[ex.outcome]}
        {ex.rttSeconds !== null ? `, round trip ${formatDuration(ex.rttSeconds)}` : ''}.{' '}
        <Link to={roundTripsHref} className="font-medium text-link hover:underline">
          Open the exchange in the schedule →
        </Link>
      </p>
      <ol aria-label="Frames of this exchange" className="flex flex-wrap gap-x-4 gap-y-1">
        {frames.map((f) => (
          <li key={`${f.role}-${f.id}`}>
            {f.id === frameId ? (
              <span aria-current="true" className="rounded bg-flare-500/15 px-1.5 py-0.5">
                {f.role} (this frame)
              </span>
            ) : (
              <Link to={frameHref(f.id)} className="text-link hover:underline">
                {f.role}
              </Link>
            )}
          </li>
        ))}
      </ol>
      <ExchangeResults exchange={ex} frameHref={frameHref} exchangeHref={exchangeHref} />
    </div>
  );
}
