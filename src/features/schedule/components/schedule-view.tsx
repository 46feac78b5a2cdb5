import { useCallback, useEffect, useMemo, useRef, useState } from 'react';
import { useSearchParams } from 'react-router';
import type { ExchangeRow, RigDetail, StationExchangeStats } from '../../../../shared/schemas';
import { Button } from '../../../components/button';
import { Card, CardTitle } from '../../../components/card';
import { ExportLinks } from '../../../components/export-links';
import { ErrorNotice } from '../../../components/notice';
import { exchangeHref } from '../../../components/exchange-results';
import { formatDuration } from '../../../components/units';
import { formatAddress } from '../../../lib/format';
import { captureScope } from '../../../lib/scope';
import { useExchangeStats } from '../api/get-exchange-stats';
import { exchangeExportUrl, useExchanges } from '../api/get-exchanges';
import { exchangeOrderLabels, exchangeOrders, orderExchanges, parseExchangeOrder, timelineSearchFor } from './exchange-order';
import { ExchangeTable } from './exchange-table';
import { RttHistogram } from './rtt-histogram';
import { RttStats } from './rtt-stats';
import { useTimingExchange } from '../api/get-exchange';
import { useScheduleWindow } from '../api/get-schedule-window';
import { useService } from '../api/get-service';
import { ExchangePanel } from './exchange-panel';
import { AXIS_H, LANE_H, ScheduleCanvas, VISITS_H } from './schedule-canvas';
import { ScheduleLegend } from './schedule-legend';
import { ServiceStats } from './service-stats';
import { clampRange, covers, fetchFor, panRange, rangeAround, zoomRange, type Fetched, type Range } from './view-range';

const ALL = 'all';
const LABEL_W = 150;

/**
 * The capture's schedule: one lane per station on a shared time axis, the server's visits above,
 * zoomable from the whole capture to single frames; the service statistics, the round-trip figures
 * and the ranked exchange lists beside it. View state (range, station, selected exchange, order)
 * lives in the URL so a link brings an exchange into view.
 */
export function ScheduleView({ rig, captureId }: { rig: RigDetail; captureId: number }) {
  const [params, setParams] = useSearchParams();
  const service = useService(rig.id, captureId);
  const extent = service.data?.extent ?? null;
  const selectedId = params.get('ex') === null ? null : Number(params.get('ex'));
  const selected = useTimingExchange(rig.id, captureId, selectedId);
  const urlRange = parseRange(params.get('from'), params.get('to'));
  const [view, setView] = useState<Range | null>(null);
  const [width, setWidth] = useState(900);
  const [fetched, setFetched] = useState<Fetched | null>(null);
  const area = useRef<HTMLDivElement>(null);
  const drawTimes = useRef<number[]>([]);

  const setParam = useCallback(
    (changes: Record<string, string | null>) =>
      setParams(
        () => {
          // from the address bar, not the render's copy: the range is written on a timer and must
          // not undo a station or exchange chosen since that render
          const next = new URLSearchParams(window.location.search);
          for (const [k, v] of Object.entries(changes)) {
            if (v === null) next.delete(k);
            else next.set(k, v);
          }
          return next;
        },
        { replace: true, preventScrollReset: true },
      ),
    [setParams],
  );

  // the first range: the link's, else around the linked exchange, else the whole capture
  useEffect(() => {
    if (view || !extent) return;
    if (urlRange) return setView(clampRange(urlRange, extent));
    if (selectedId !== null && !selected.data && !selected.error) return;
    if (selected.data) return setView(rangeAround(selected.data.tRequest, selected.data.tResponse ?? selected.data.tRequestEnd, extent));
    setView({ from: extent.from, to: extent.to });
  }, [view, extent, urlRange, selectedId, selected.data, selected.error]);

  // the range goes to the URL once it settles
  useEffect(() => {
    if (!view) return;
    const t = setTimeout(() => {
      // unchanged: writing it again would cancel a navigation the user started meanwhile
      const now = new URLSearchParams(window.location.search);
      const from = view.from.toFixed(9);
      const to = view.to.toFixed(9);
      if (now.get('from') !== from || now.get('to') !== to) setParam({ from, to });
    }, 400);
    return () => clearTimeout(t);
  }, [view, setParam]);

  useEffect(() => {
    const el = area.current;
    if (!el) return;
    const ro = new ResizeObserver(() => setWidth(Math.max(200, Math.floor(el.clientWidth))));
    ro.observe(el);
    return () => ro.disconnect();
  }, [extent]);

  // load another window only when the one loaded no longer covers the view at its scale
  useEffect(() => {
    if (!view || !extent) return;
    if (!covers(fetched, view, width)) setFetched(fetchFor(view, width, extent));
  }, [view, width, extent, fetched]);
  const win = useScheduleWindow(rig.id, captureId, fetched);

  const onPan = useCallback((f: number) => setView((v) => (v && extent ? panRange(v, f, extent) : v)), [extent]);
  const onZoom = useCallback((factor: number, at: number) => setView((v) => (v && extent ? zoomRange(v, factor, at, extent) : v)), [extent]);
  const onZoomTo = useCallback((r: Range) => setView(() => (extent ? clampRange(r, extent) : null)), [extent]);
  const onSelect = useCallback((id: number) => setParam({ ex: String(id) }), [setParam]);
  const onDrawn = useCallback((ms: number) => {
    const list = drawTimes.current;
    list.push(ms);
    if (list.length > 600) list.shift();
    (window as unknown as { __scheduleDrawMs?: number[] }).__scheduleDrawMs = list;
  }, []);

  // lists beside the schedule: the round-trip view's, by station
  const all = useExchangeStats(rig.id, captureId, []);
  const stationsSeen = all.data?.stations ?? [];
  const stationParam = params.get('station');
  const chosen: number | typeof ALL = stationParam !== null && stationParam !== ALL && Number.isInteger(Number(stationParam)) ? Number(stationParam) : ALL;
  const stationFilter = chosen === ALL ? [] : [chosen];
  const stats = useExchangeStats(rig.id, captureId, stationFilter);
  const exchanges = useExchanges(rig.id, captureId, { station: stationFilter });
  const order = parseExchangeOrder(params.get('order'));
  const listed = useMemo(() => orderExchanges(exchanges.data?.rows ?? [], order), [exchanges.data, order]);
  const chosenStats: StationExchangeStats | undefined = chosen === ALL ? undefined : stats.data?.stations.find((s) => s.address === chosen);

  const base = captureScope(rig.id, captureId).page;
  const frameHref = (id: number) => `${base}/frames/${id}`;
  const timelineHref = (row: ExchangeRow) => `${base}/timeline${timelineSearchFor(row)}`;
  const names = extent?.stationNames ?? {};
  const name = (a: number) => names[a] ?? rig.stations.find((s) => s.address === a)?.name ?? `Station ${formatAddress(a)}`;

  const show = (row: ExchangeRow) => {
    setParam({ ex: String(row.id) });
    if (extent) setView(rangeAround(row.tRequest, row.tResponse ?? row.tRequestEnd, extent));
    area.current?.scrollIntoView({ block: 'nearest' });
  };
  const showStation = (station: number) => {
    setParam({ station: String(station) });
    const longest = service.data?.report?.stations.find((s) => s.station === station)?.longestWait;
    if (longest && extent) setView(rangeAround(longest.rise, longest.end, extent, 0.5));
  };

  if (service.error) return <ErrorNotice error={service.error} />;
  if (!service.data) return <p className="text-sm text-muted">Working out the schedule…</p>;
  if (!service.data.available) return <Unavailable reason={service.data.reason} base={base} />;
  const report = service.data.report!;
  const w = win.data?.window ?? null;
  const lanes = w?.lanes ?? [];
  const height = AXIS_H + VISITS_H + Math.max(1, lanes.length) * LANE_H;
  const span = view ? view.to - view.from : 0;

  return (
    <div className="space-y-5">
      <Card>
        <CardTitle
          aside={
            <div className="flex flex-wrap items-center gap-1.5" role="toolbar" aria-label="Schedule zoom and pan">
              <Button variant="secondary" onClick={() => onPan(-0.5)} aria-label="Earlier">
                ←
              </Button>
              <Button variant="secondary" onClick={() => onZoom(0.5, 0.5)}>
                Zoom in
              </Button>
              <Button variant="secondary" onClick={() => onZoom(2, 0.5)}>
                Zoom out
              </Button>
              <Button variant="secondary" onClick={() => extent && setView({ from: extent.from, to: extent.to })}>
                Whole capture
              </Button>
              <Button variant="secondary" onClick={() => onPan(0.5)} aria-label="Later">
                →
              </Button>
            </div>
          }
        >
          Schedule
        </CardTitle>
        <p className="mb-2 font-mono text-xs text-muted" data-testid="schedule-range">
          {view ? `${view.from.toFixed(6)} s – ${view.to.toFixed(6)} s · ${formatDuration(span)} across` : ''}
          {win.isFetching ? ' · loading…' : ''}
        </p>
        {win.error ? <ErrorNotice error={win.error} /> : null}
        <div className="flex">
          <div style={{ width: LABEL_W }} className="shrink-0 text-xs">
            <div style={{ height: AXIS_H }} />
            <div style={{ height: VISITS_H }} className="pt-3 text-muted" title={`Visiting order: ${report.server.order.map(name).join(' → ')}`}>
              Server visits
            </div>
            {lanes.map((l) => (
              <div key={l.station} style={{ height: LANE_H }} className={`border-t border-line/60 pt-1 ${chosen === l.station ? 'font-semibold' : ''}`} data-testid="schedule-lane">
                <button type="button" className="text-left text-link hover:underline" onClick={() => showStation(l.station)}>
                  {name(l.station)}
                </button>
                <div className="font-mono text-[10px] text-muted">{formatAddress(l.station)}</div>
              </div>
            ))}
          </div>
          <div ref={area} className="min-w-0 flex-1">
            {w && view ? (
              <ScheduleCanvas win={w} view={view} height={height} selectedId={selectedId} onPan={onPan} onZoom={onZoom} onSelect={onSelect} onZoomTo={onZoomTo} onDrawn={onDrawn} />
            ) : (
              <p className="text-sm text-muted">Drawing…</p>
            )}
          </div>
        </div>
        <ScheduleLegend />
        <p className="mt-1 text-xs text-muted">
          To scale. Wheel or the buttons zoom, drag or shift+wheel pans; select an exchange span to open it, or a dense stretch to zoom into it. Spans narrower than two pixels are
          shown as a shaded column per pixel.
        </p>
        {selectedId !== null ? (
          <div className="mt-3">
            <ExchangePanel row={selected.data} error={selected.error} frameHref={frameHref} timelineHref={timelineHref} onClose={() => setParam({ ex: null })} />
          </div>
        ) : null}
      </Card>

      <Card>
        <CardTitle>Service and the server's round</CardTitle>
        <ServiceStats report={report} names={names} onStation={showStation} />
      </Card>

      <div className="flex flex-wrap items-end gap-4">
        <label className="space-y-1 text-sm">
          <span className="block font-medium">Station</span>
          <select
            aria-label="Station"
            value={String(chosen)}
            onChange={(e) => setParam({ station: e.target.value === ALL ? null : e.target.value })}
            className="block rounded-md border border-line bg-surface px-2.5 py-1.5 text-sm text-text focus:outline-none focus:ring-2 focus:ring-focus/60"
          >
            <option value={ALL}>All stations</option>
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
              <ExportLinks href={(format) => exchangeExportUrl(rig.id, captureId, { station: stationFilter }, format)} what={chosen === ALL ? 'every exchange of this capture' : 'the exchanges listed below'} />
            </span>
          </CardTitle>
          {exchanges.error ? <ErrorNotice error={exchanges.error} /> : null}
          {exchanges.data && exchanges.data.total > exchanges.data.rows.length ? (
            <p className="mb-2 text-sm text-muted">Ranking the first {exchanges.data.rows.length} of {exchanges.data.total} exchanges; the schedule shows them all.</p>
          ) : null}
          <div className="max-h-[32rem] overflow-y-auto">
            <ExchangeTable rows={listed.slice(0, 300)} frameHref={frameHref} timelineHref={timelineHref} exchangeHref={(id) => exchangeHref(base, id)} onShow={show} showStation={chosen === ALL} caption={`Exchanges, ${exchangeOrderLabels[order].toLowerCase()}`} />
          </div>
          {listed.length > 300 ? <p className="mt-2 text-xs text-muted">The first 300 in this order; export for the rest.</p> : null}
        </Card>
      </div>
    </div>
  );
}

function parseRange(from: string | null, to: string | null): Range | null {
  const a = Number(from);
  const b = Number(to);
  return from !== null && to !== null && Number.isFinite(a) && Number.isFinite(b) && b > a ? { from: a, to: b } : null;
}

function Unavailable({ reason, base }: { reason: string | null; base: string }) {
  const words: Record<string, string> = {
    'not-decoded': 'The capture has no finished decode yet: the schedule is drawn from its frames.',
    'no-frames': 'The decode found no frames, so there is nothing to put on the schedule.',
    'no-roles': 'No link has its direction set, so no frame can be put in a station’s lane. Set each data channel’s direction (and its station on per-port wiring) in the channel roles.',
  };
  return (
    <Card>
      <CardTitle>No schedule</CardTitle>
      <p className="mb-3 text-sm text-muted">{words[reason ?? ''] ?? 'The schedule could not be drawn.'}</p>
      <a href={`${base}/setup`} className="text-sm font-medium text-link hover:underline">
        Channel roles and decode →
      </a>
    </Card>
  );
}
