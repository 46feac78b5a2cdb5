import { useEffect, useState } from 'react';
import { useSearchParams } from 'react-router';
import type { ExchangeRow, RigDetail, StationExchangeStats } from '../../../../shared/schemas';
import { Button } from '../../../components/button';
import { Card, CardTitle } from '../../../components/card';
import { ErrorNotice } from '../../../components/notice';
import { formatCount, formatDuration } from '../../../components/units';
import { formatAddress } from '../../../lib/format';
import { useExchangeStats } from '../api/get-exchange-stats';
import { exchangeExportUrl, useExchanges } from '../api/get-exchanges';
import { ExportLinks } from '../../../components/export-links';
import { ExchangeLadder, type LadderLane } from './exchange-ladder';
import { exchangeOrderLabels, exchangeOrders, orderExchanges, parseExchangeOrder, timelineSearchFor } from './exchange-order';
import { exchangeHref } from '../../../components/exchange-results';
import { ExchangeTable } from './exchange-table';
import { RttHistogram } from './rtt-histogram';
import { RttStats } from './rtt-stats';
import { captureScope } from '../../../lib/scope';

/** exchanges drawn in one ladder page: enough to follow a boot, small enough to read */
const LADDER_PAGE = 24;
const ALL = 'all';

function stationName(s: { address: number; name: string | null }, rig: RigDetail): string {
  return s.name ?? rig.stations.find((r) => r.address === s.address)?.name ?? `Station ${formatAddress(s.address)}`;
}

/** Screen 8: one station's exchanges as a ladder, with round-trip figures and a list that can put the slow ones first. */
export function RoundTripsView({ rig, captureId }: { rig: RigDetail; captureId: number }) {
  const [params, setParams] = useSearchParams();
  const all = useExchangeStats(rig.id, captureId, []);
  const stationsSeen = all.data?.stations ?? [];
  const stationParam = params.get('station');
  const chosen: number | typeof ALL | null =
    stationParam === ALL ? ALL : stationParam !== null && Number.isInteger(Number(stationParam)) ? Number(stationParam) : (stationsSeen[0]?.address ?? null);
  const stationFilter = chosen === ALL || chosen === null ? [] : [chosen];
  const stats = useExchangeStats(rig.id, captureId, stationFilter);
  const exchanges = useExchanges(rig.id, captureId, { station: stationFilter }, chosen !== null);
  const order = parseExchangeOrder(params.get('order'));
  const selectedId = params.get('ex') === null ? null : Number(params.get('ex'));
  // the exchange to bring into view once its ladder page is drawn: the one in the link at first, later the one asked for
  const [reveal, setReveal] = useState<number | null>(selectedId);

  const base = `${captureScope(rig.id, captureId).page}`;
  const frameHref = (id: number) => `${base}/frames/${id}`;
  const timelineHref = (row: ExchangeRow) => `${base}/timeline${timelineSearchFor(row)}`;

  function setParam(changes: Record<string, string | null>, replace = false) {
    setParams(
      (prev) => {
        const next = new URLSearchParams(prev);
        for (const [k, v] of Object.entries(changes)) {
          if (v === null) next.delete(k);
          else next.set(k, v);
        }
        return next;
      },
      { replace, preventScrollReset: true },
    );
  }

  const drawn = exchanges.data !== undefined;
  // eslint-disable-next-line react-hooks/exhaustive-deps -- after every render on purpose: the band may be drawn a render or two after the data arrives
  useEffect(() => {
    if (reveal === null || !drawn) return;
    const band = document.querySelector(`[data-exchange="${reveal}"]`);
    if (!band) return;
    band.scrollIntoView({ block: 'center' });
    band.querySelector<SVGAElement | HTMLAnchorElement>('a')?.focus({ preventScroll: true });
    setReveal(null);
  });

  if (all.error) return <ErrorNotice error={all.error} />;
  if (all.isPending) return <p className="text-sm text-muted">Loading exchanges…</p>;
  if (stationsSeen.length === 0) {
    return (
      <Card>
        <CardTitle>No exchanges</CardTitle>
        <p className="text-sm text-muted">
          The call layer paired no request with an answer in this capture. Exchanges need both directions of a station's line with their direction set in the channel roles, and information fields the rig's field map can read.
        </p>
      </Card>
    );
  }

  const rows = exchanges.data?.rows ?? [];
  const byTime = orderExchanges(rows, 'time');
  const listed = orderExchanges(rows, order);
  const pages = Math.max(1, Math.ceil(byTime.length / LADDER_PAGE));
  const selectedIndex = selectedId === null ? -1 : byTime.findIndex((r) => r.id === selectedId);
  const lpParam = Number(params.get('lp') ?? NaN);
  const page = Number.isInteger(lpParam) ? Math.min(pages - 1, Math.max(0, lpParam)) : selectedIndex >= 0 ? Math.floor(selectedIndex / LADDER_PAGE) : 0;
  const shown = byTime.slice(page * LADDER_PAGE, (page + 1) * LADDER_PAGE);
  const lanes: LadderLane[] = (chosen === ALL ? stationsSeen : stationsSeen.filter((s) => s.address === chosen)).map((s) => ({ address: s.address, name: stationName(s, rig) }));
  const chosenStats: StationExchangeStats | undefined = chosen === ALL ? undefined : stats.data?.stations.find((s) => s.address === chosen);

  const showInLadder = (row: ExchangeRow) => {
    const i = byTime.findIndex((r) => r.id === row.id);
    setParam({ ex: String(row.id), lp: String(Math.floor(i / LADDER_PAGE)) }, true);
    // scrolled to once the ladder page holding it is drawn (see the effect above)
    setReveal(row.id);
  };

  return (
    <div className="space-y-5">
      <div className="flex flex-wrap items-end gap-4">
        <label className="space-y-1 text-sm">
          <span className="block font-medium">Station</span>
          <select
            aria-label="Station"
            value={chosen === null ? '' : String(chosen)}
            onChange={(e) => setParam({ station: e.target.value, ex: null, lp: null })}
            className="block rounded-md border border-line bg-surface px-2.5 py-1.5 text-sm text-text focus:outline-none focus:ring-2 focus:ring-focus/60"
          >
            {chosen !== ALL && chosen !== null && !stationsSeen.some((s) => s.address === chosen) ? <option value={chosen}>{formatAddress(chosen)}</option> : null}
            {stationsSeen.map((s) => (
              <option key={s.address} value={s.address}>
                {stationName(s, rig)} ({formatAddress(s.address)}) · {s.count} exchanges
              </option>
            ))}
            <option value={ALL}>All stations</option>
          </select>
        </label>
        <p className="pb-1.5 text-sm text-muted">
          Round trip: from the request's last bit to the answer's first bit. Service delay: from the station raising RTS to the server's first frame to it.
        </p>
      </div>

      {chosen !== ALL && chosen !== null && !stationsSeen.some((s) => s.address === chosen) ? (
        <p role="status" className="text-sm text-muted">
          Station {formatAddress(chosen)} has no exchanges in this capture. Choose another above.
        </p>
      ) : null}
      {stats.error ? <ErrorNotice error={stats.error} /> : null}
      {chosenStats ? <RttStats stats={chosenStats} /> : null}
      {chosen === ALL && stats.data ? <StationStatsTable stations={stats.data.stations} rig={rig} /> : null}

      <Card>
        <CardTitle>Round-trip times</CardTitle>
        {stats.data ? <RttHistogram histogram={stats.data.histogram} /> : <p className="text-sm text-muted">Loading…</p>}
      </Card>

      <Card className="scroll-mt-4">
        <div id="ladder" />
        <CardTitle
          aside={
            pages > 1 ? (
              <div className="flex items-center gap-2 text-sm">
                <Button variant="secondary" disabled={page === 0} onClick={() => setParam({ lp: String(page - 1) }, true)}>
                  ← Earlier
                </Button>
                <span className="font-mono text-xs text-muted">
                  {page * LADDER_PAGE + 1}–{Math.min(byTime.length, (page + 1) * LADDER_PAGE)} of {byTime.length}
                </span>
                <Button variant="secondary" disabled={page >= pages - 1} onClick={() => setParam({ lp: String(page + 1) }, true)}>
                  Later →
                </Button>
              </div>
            ) : null
          }
        >
          Ladder
        </CardTitle>
        {exchanges.error ? <ErrorNotice error={exchanges.error} /> : null}
        {exchanges.isPending ? <p className="text-sm text-muted">Loading exchanges…</p> : null}
        {exchanges.data && exchanges.data.total > rows.length ? (
          <p className="mb-2 text-sm text-muted">Showing the first {formatCount(rows.length)} of {formatCount(exchanges.data.total)} exchanges.</p>
        ) : null}
        {shown.length > 0 ? (
          <>
            <ExchangeLadder rows={shown} lanes={lanes} frameHref={frameHref} timelineHref={timelineHref} selectedId={selectedId} />
            <p className="mt-2 text-xs text-muted">
              Each exchange has a band of its own; spacing is not to scale, the times are written beside each. Select an arrow to open its frame.
            </p>
          </>
        ) : null}
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
                  onClick={() => setParam({ order: o === 'time' ? null : o }, true)}
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
              href={(format) => exchangeExportUrl(rig.id, captureId, { station: stationFilter }, format)}
              what={chosen === ALL ? 'every exchange of this capture' : 'the exchanges listed below'}
            />
          </span>
        </CardTitle>
        <ExchangeTable rows={listed} frameHref={frameHref} timelineHref={timelineHref} exchangeHref={(id) => exchangeHref(base, id)} onShow={showInLadder} showStation={chosen === ALL} caption={`Exchanges, ${exchangeOrderLabels[order].toLowerCase()}`} />
      </Card>
    </div>
  );
}

function StationStatsTable({ stations, rig }: { stations: StationExchangeStats[]; rig: RigDetail }) {
  const d = (v: number | undefined) => (v === undefined ? '—' : formatDuration(v));
  return (
    <Card>
      <table className="w-full text-sm" aria-label="Round-trip statistics per station">
        <thead>
          <tr className="border-b border-line text-left text-xs uppercase tracking-wide text-muted">
            <th className="py-2 pr-3 font-medium">Station</th>
            <th className="py-2 pr-3 text-right font-medium">Exchanges</th>
            <th className="py-2 pr-3 text-right font-medium">Retried</th>
            <th className="py-2 pr-3 text-right font-medium">Unanswered</th>
            <th className="py-2 pr-3 text-right font-medium">Min</th>
            <th className="py-2 pr-3 text-right font-medium">Median</th>
            <th className="py-2 pr-3 text-right font-medium">p95</th>
            <th className="py-2 pr-3 text-right font-medium">Max</th>
            <th className="py-2 text-right font-medium">Service delay</th>
          </tr>
        </thead>
        <tbody className="font-mono text-xs">
          {stations.map((s) => (
            <tr key={s.address} className="border-b border-line/70 last:border-0">
              <td className="py-1.5 pr-3 font-sans text-sm">{stationName(s, rig)}</td>
              <td className="py-1.5 pr-3 text-right">{s.count}</td>
              <td className="py-1.5 pr-3 text-right">{s.retried}</td>
              <td className="py-1.5 pr-3 text-right">{s.unanswered}</td>
              <td className="py-1.5 pr-3 text-right">{d(s.rtt?.min)}</td>
              <td className="py-1.5 pr-3 text-right">{d(s.rtt?.median)}</td>
              <td className="py-1.5 pr-3 text-right">{d(s.rtt?.p95)}</td>
              <td className="py-1.5 pr-3 text-right">{d(s.rtt?.max)}</td>
              <td className="py-1.5 text-right">{d(s.serviceDelay?.median)}</td>
            </tr>
          ))}
        </tbody>
      </table>
    </Card>
  );
}
