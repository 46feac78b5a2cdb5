import { useRef, type ReactNode } from 'react';
import { Link } from 'react-router';
import { useVirtualizer } from '@tanstack/react-virtual';
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
  /**
   * Scroll inside a box of this height (css) and render only the rows in view: the schedule lists
   * up to 300 exchanges, each row with four links, and rendering them all held up the lanes' first
   * drawing on a long capture.
   */
  scrollHeight?: string;
}

/**
 * a row's height for the spacers above and below the rendered rows (one line of text). Rows are not
 * measured: measuring each forced a layout per row. A row with results is taller, which only makes
 * the scroll bar a little off.
 */
const ROW_ESTIMATE = 33;

/** Exchanges as a table: the keyboard twin of the schedule, and the per-file exchange list. */
export function ExchangeTable({ rows, frameHref, timelineHref, exchangeHref, onShow, showStation = true, caption, scrollHeight }: ExchangeTableProps) {
  const head = (
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
  );
  const row = (r: ExchangeRow) => (
    <ExchangeTableRow key={r.id} r={r} frameHref={frameHref} timelineHref={timelineHref} exchangeHref={exchangeHref} onShow={onShow} showStation={showStation} />
  );
  if (scrollHeight !== undefined) return <WindowedTable rows={rows} head={head} caption={caption} scrollHeight={scrollHeight} row={row} columns={showStation ? 8 : 7} />;
  return (
    <div className="overflow-x-auto">
      <table className="w-full text-sm">
        <caption className="sr-only">{caption}</caption>
        {head}
        <tbody>{rows.map((r) => row(r))}</tbody>
      </table>
    </div>
  );
}

function WindowedTable({
  rows,
  head,
  caption,
  scrollHeight,
  row,
  columns,
}: {
  rows: ExchangeRow[];
  head: ReactNode;
  caption: string;
  scrollHeight: string;
  row: (r: ExchangeRow) => ReactNode;
  columns: number;
}) {
  const scroller = useRef<HTMLDivElement>(null);
  const virtualizer = useVirtualizer({ count: rows.length, getScrollElement: () => scroller.current, estimateSize: () => ROW_ESTIMATE, overscan: 10 });
  const items = virtualizer.getVirtualItems();
  const top = items[0]?.start ?? 0;
  const bottom = virtualizer.getTotalSize() - (items[items.length - 1]?.end ?? 0);
  return (
    <div ref={scroller} className="overflow-auto" style={{ maxHeight: scrollHeight }}>
      <table className="w-full text-sm">
        <caption className="sr-only">{caption}</caption>
        {head}
        <tbody>
          {top > 0 ? (
            <tr aria-hidden="true">
              <td colSpan={columns} style={{ height: top, padding: 0 }} />
            </tr>
          ) : null}
          {items.map((it) => row(rows[it.index]))}
          {bottom > 0 ? (
            <tr aria-hidden="true">
              <td colSpan={columns} style={{ height: bottom, padding: 0 }} />
            </tr>
          ) : null}
        </tbody>
      </table>
    </div>
  );
}

interface RowProps extends Pick<ExchangeTableProps, 'frameHref' | 'timelineHref' | 'exchangeHref' | 'onShow'> {
  r: ExchangeRow;
  showStation: boolean;
}

function ExchangeTableRow({ r, showStation, frameHref, timelineHref, exchangeHref, onShow }: RowProps) {
  return (
    <tr className="border-b border-line/70 last:border-0" data-testid="exchange-row">
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
  );
}
