import { Link } from 'react-router';
import type { ExchangeRow } from '../../../../shared/schemas';
import { formatDuration, formatSeconds } from '../../../components/units';
import { formatAddress } from '../../../lib/format';
import { ExchangeResults } from '../../../components/exchange-results';
import { OutcomeChip } from './outcome-chip';

interface ExchangeTableProps {
  rows: ExchangeRow[];
  frameHref: (frameId: number) => string;
  timelineHref: (row: ExchangeRow) => string;
  /** the schedule with another exchange chosen (the other side of a lock conflict) */
  exchangeHref: (exchangeId: number) => string;
  /** brings the exchange into view on the schedule; absent where there is none */
  onShow?: (row: ExchangeRow) => void;
  showStation?: boolean;
  caption: string;
}

/** Exchanges as a table: the keyboard twin of the schedule, and the per-file exchange list. */
export function ExchangeTable({ rows, frameHref, timelineHref, exchangeHref, onShow, showStation = true, caption }: ExchangeTableProps) {
  return (
    <div className="overflow-x-auto">
      <table className="w-full text-sm">
        <caption className="sr-only">{caption}</caption>
        <thead>
          <tr className="border-b border-line text-left text-xs uppercase tracking-wide text-muted">
            <th className="py-2 pr-3 font-medium">Time (s)</th>
            {showStation ? <th className="py-2 pr-3 font-medium">Station</th> : null}
            <th className="py-2 pr-3 font-medium">Call</th>
            <th className="py-2 pr-3 font-medium">File · record</th>
            <th className="py-2 pr-3 font-medium">Status</th>
            <th className="py-2 pr-3 text-right font-medium">RTT</th>
            <th className="py-2 pr-3 font-medium">Outcome</th>
            <th className="py-2 font-medium">Frames</th>
          </tr>
        </thead>
        <tbody>
          {rows.map((r) => (
            <tr key={r.id} className="border-b border-line/70 last:border-0" data-testid="exchange-row">
              <td className="py-1.5 pr-3 font-mono text-xs">{formatSeconds(r.tRequest)}</td>
              {showStation ? <td className="py-1.5 pr-3 whitespace-nowrap">{r.station.name ?? formatAddress(r.station.address)}</td> : null}
              <td className="py-1.5 pr-3 font-mono text-xs whitespace-nowrap">{r.call.name ?? (r.call.code === null ? '?' : String(r.call.code))}</td>
              <td className="py-1.5 pr-3 font-mono text-xs">
                {r.fileName ?? ''}
                {r.recordNumber !== null ? `${r.fileName ? ' · ' : ''}rec ${r.recordNumber}` : ''}
              </td>
              <td className="py-1.5 pr-3 text-xs" title={r.statusMeaning ?? undefined}>
                {r.status === null ? '—' : `${formatAddress(r.status)}${r.statusMeaning ? ` ${r.statusMeaning}` : ''}`}
              </td>
              <td className="py-1.5 pr-3 text-right font-mono text-xs tabular-nums whitespace-nowrap" data-testid="rtt">{r.rttSeconds === null ? '—' : formatDuration(r.rttSeconds)}</td>
              <td className="py-1.5 pr-3">
                <OutcomeChip outcome={r.outcome} />
                {r.retries > 0 ? <span className="ml-1 text-xs text-muted">{r.retries}× again</span> : null}
                <ExchangeResults exchange={r} frameHref={frameHref} exchangeHref={exchangeHref} compact />
              </td>
              <td className="py-1.5 text-xs whitespace-nowrap">
                {r.requestFrameId !== null ? (
                  <Link to={frameHref(r.requestFrameId)} className="text-link hover:underline">
                    request
                  </Link>
                ) : null}
                {r.responseFrameIds[0] !== undefined ? (
                  <>
                    {' · '}
                    <Link to={frameHref(r.responseFrameIds[0])} className="text-link hover:underline">
                      answer
                    </Link>
                  </>
                ) : null}
                {' · '}
                <Link to={timelineHref(r)} className="text-link hover:underline">
                  timeline
                </Link>
                {onShow ? (
                  <>
                    {' · '}
                    <button type="button" onClick={() => onShow(r)} className="text-link hover:underline">
                      schedule
                    </button>
                  </>
                ) : null}
              </td>
            </tr>
          ))}
        </tbody>
      </table>
    </div>
  );
}
