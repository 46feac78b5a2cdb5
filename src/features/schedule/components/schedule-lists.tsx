import { memo } from 'react';
import type { ExchangeRow, StationExchangeStats } from '../../../../shared/schemas';
import { Card, CardTitle } from '../../../components/card';
import { ExportLinks } from '../../../components/export-links';
import { ErrorNotice } from '../../../components/notice';
import { exchangeHref } from '../../../components/exchange-results';
import { formatAddress } from '../../../lib/format';
import { useExchangeStats } from '../api/get-exchange-stats';
import { exchangeExportUrl } from '../api/get-exchanges';
import { useRankedExchanges } from '../api/get-ranked-exchanges';
import { exchangeOrderLabels, exchangeOrders, timelineSearchFor, type ExchangeOrder } from './exchange-order';
import { ExchangeTable } from './exchange-table';
import { RttHistogram } from './rtt-histogram';
import { RttStats } from './rtt-stats';

export const ALL_STATIONS = 'all';

/** The URL's `station`: one address, or all stations. */
export function parseStation(param: string | null): number | typeof ALL_STATIONS {
  return param !== null && param !== ALL_STATIONS && Number.isInteger(Number(param)) ? Number(param) : ALL_STATIONS;
}

interface ScheduleListsProps {
  rigId: number;
  captureId: number;
  /** the capture's pages (`captureScope(…).page`) */
  base: string;
  chosen: number | typeof ALL_STATIONS;
  order: ExchangeOrder;
  name: (address: number) => string;
  /** the round-trip figures read every exchange: on a long capture they wait until the lanes are drawn, so they do not hold the lanes up */
  statsEnabled: boolean;
  setParam: (changes: Record<string, string | null>) => void;
  onShow: (row: ExchangeRow) => void;
}

/**
 * Below the schedule: the station choice, the round-trip figures and histogram, and the exchanges in
 * the chosen order (ranked by the server). Memoised: panning and zooming the schedule re-render its
 * canvas, not these lists.
 */
export const ScheduleLists = memo(function ScheduleLists({ rigId, captureId, base, chosen, order, name, statsEnabled, setParam, onShow }: ScheduleListsProps) {
  const stationFilter = chosen === ALL_STATIONS ? [] : [chosen];
  const all = useExchangeStats(rigId, captureId, [], statsEnabled);
  const stats = useExchangeStats(rigId, captureId, stationFilter, statsEnabled);
  const ranked = useRankedExchanges(rigId, captureId, stationFilter, order);
  const stationsSeen = all.data?.stations ?? [];
  const chosenStats: StationExchangeStats | undefined = chosen === ALL_STATIONS ? undefined : stats.data?.stations.find((s) => s.address === chosen);
  const frameHref = (id: number) => `${base}/frames/${id}`;
  const timelineHref = (row: ExchangeRow) => `${base}/timeline${timelineSearchFor(row)}`;

  return (
    <>
      <div className="flex flex-wrap items-end gap-4">
        <label className="space-y-1 text-sm">
          <span className="block font-medium">Station</span>
          <select
            aria-label="Station"
            value={String(chosen)}
            onChange={(e) => setParam({ station: e.target.value === ALL_STATIONS ? null : e.target.value })}
            className="block rounded-md border border-line bg-surface px-2.5 py-1.5 text-sm text-text focus:outline-none focus:ring-2 focus:ring-focus/60"
          >
            <option value={ALL_STATIONS}>All stations</option>
            {chosen !== ALL_STATIONS && !stationsSeen.some((s) => s.address === chosen) ? <option value={chosen}>{name(chosen)} ({formatAddress(chosen)})</option> : null}
            {stationsSeen.map((s) => (
              <option key={s.address} value={s.address}>
                {name(s.address)} ({formatAddress(s.address)}) · {s.count} exchanges
              </option>
            ))}
          </select>
        </label>
        <p className="pb-1.5 text-sm text-muted">Round trip: from the request's last bit to the answer's first bit.</p>
      </div>
      {stats.error ? <ErrorNotice error={stats.error} /> : null}
      {chosenStats ? <RttStats stats={chosenStats} /> : null}
      <div className="grid gap-5 xl:grid-cols-[2fr_3fr]">
        <Card>
          <CardTitle>Round-trip times</CardTitle>
          {stats.data ? <RttHistogram histogram={stats.data.histogram} /> : <p className="text-sm text-muted">Loading…</p>}
        </Card>
        <Card>
          <CardTitle
            aside={
              <div role="radiogroup" aria-label="List order" className="flex flex-wrap gap-1">
                {exchangeOrders.map((o) => (
                  <button
                    key={o}
                    type="button"
                    role="radio"
                    aria-checked={order === o}
                    onClick={() => setParam({ order: o === 'time' ? null : o })}
                    className={`rounded-md border px-2.5 py-1 text-xs font-medium ${order === o ? 'border-flare-500 bg-flare-500/15 text-text' : 'border-line text-muted hover:text-text'}`}
                  >
                    {exchangeOrderLabels[o]}
                  </button>
                ))}
              </div>
            }
          >
            <span className="flex flex-wrap items-center gap-3">
              Exchanges
              <ExportLinks
                href={(format) => exchangeExportUrl(rigId, captureId, { station: stationFilter }, format)}
                what={chosen === ALL_STATIONS ? 'every exchange of this capture' : 'the exchanges listed below'}
              />
            </span>
          </CardTitle>
          {ranked.error ? <ErrorNotice error={ranked.error} /> : null}
          {ranked.data ? (
            <ExchangeTable
                rows={ranked.data.rows}
                frameHref={frameHref}
                timelineHref={timelineHref}
                exchangeHref={(id) => exchangeHref(base, id)}
                onShow={onShow}
                showStation={chosen === ALL_STATIONS}
                caption={`Exchanges, ${exchangeOrderLabels[order].toLowerCase()}`}
                scrollHeight="32rem"
              />
          ) : ranked.error ? null : (
            <p className="text-sm text-muted">Loading exchanges…</p>
          )}
          {ranked.data && ranked.data.total > ranked.data.rows.length ? (
            <p className="mt-2 text-xs text-muted">
              The first {ranked.data.rows.length} of {ranked.data.total} in this order; export for the rest.
            </p>
          ) : null}
        </Card>
      </div>
    </>
  );
});
