import { memo, useCallback, useEffect, useRef, useState } from 'react';
import { useNavigation, useSearchParams } from 'react-router';
import type { ServiceReport } from '../../../../shared/decoder/timing';
import type { ExchangeRow, RigDetail } from '../../../../shared/schemas';
import { Button } from '../../../components/button';
import { Card, CardTitle } from '../../../components/card';
import { ErrorNotice } from '../../../components/notice';
import { formatDuration } from '../../../components/units';
import { formatAddress } from '../../../lib/format';
import { captureScope } from '../../../lib/scope';
import { parseExchangeOrder, timelineSearchFor } from './exchange-order';
import { useTimingExchange } from '../api/get-exchange';
import { useScheduleWindow } from '../api/get-schedule-window';
import { useService } from '../api/get-service';
import { ExchangePanel } from './exchange-panel';
import { AXIS_H, LANE_H, ScheduleCanvas, VISITS_H } from './schedule-canvas';
import { ScheduleLegend } from './schedule-legend';
import { parseStation, ScheduleLists } from './schedule-lists';
import { ServiceStats } from './service-stats';
import { LABEL_W, noteAreaWidth, scheduleAreaWidth } from './schedule-width';
import { clampRange, covers, fetchFor, panRange, parseRange, rangeAround, zoomRange, type Fetched, type Range } from './view-range';


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
  // the loader fetched the first window for this width: the same guess here finds it in the cache
  const [width, setWidth] = useState(scheduleAreaWidth);
  const [fetched, setFetched] = useState<Fetched | null>(null);
  const area = useRef<HTMLDivElement>(null);
  const drawTimes = useRef<number[]>([]);
  // a link the user followed is pending while its loaders run; a range write then would cancel it
  const navigation = useNavigation();
  const leaving = useRef(false);
  leaving.current = navigation.state !== 'idle';

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
      if (leaving.current) return;
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
    const ro = new ResizeObserver(() => setWidth(noteAreaWidth(el.clientWidth)));
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

  const chosen = parseStation(params.get('station'));
  const order = parseExchangeOrder(params.get('order'));

  const base = captureScope(rig.id, captureId).page;
  const frameHref = (id: number) => `${base}/frames/${id}`;
  const timelineHref = (row: ExchangeRow) => `${base}/timeline${timelineSearchFor(row)}`;
  const stationNames = extent?.stationNames;
  const name = useCallback(
    (a: number) => stationNames?.[a] ?? rig.stations.find((s) => s.address === a)?.name ?? `Station ${formatAddress(a)}`,
    [stationNames, rig.stations],
  );

  const show = useCallback(
    (row: ExchangeRow) => {
      setParam({ ex: String(row.id) });
      if (extent) setView(rangeAround(row.tRequest, row.tResponse ?? row.tRequestEnd, extent));
      area.current?.scrollIntoView({ block: 'nearest' });
    },
    [setParam, extent],
  );
  const report = service.data?.report ?? null;
  const showStation = useCallback(
    (station: number) => {
      setParam({ station: String(station) });
      const longest = report?.stations.find((s) => s.station === station)?.longestWait;
      if (longest && extent) setView(rangeAround(longest.rise, longest.end, extent, 0.5));
    },
    [setParam, report, extent],
  );

  if (service.error) return <ErrorNotice error={service.error} />;
  if (!service.data) return <p className="text-sm text-muted">Working out the schedule…</p>;
  if (!service.data.available || !report) return <Unavailable reason={service.data.reason} base={base} />;
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
              <ScheduleCanvas win={w} view={view} width={width} height={height} selectedId={selectedId} onPan={onPan} onZoom={onZoom} onSelect={onSelect} onZoomTo={onZoomTo} onDrawn={onDrawn} />
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

      <ServiceCard report={report} names={stationNames} onStation={showStation} />
      <ScheduleLists
        rigId={rig.id}
        captureId={captureId}
        base={base}
        chosen={chosen}
        order={order}
        name={name}
        statsEnabled={w !== null || win.error !== null}
        setParam={setParam}
        onShow={show}
      />
    </div>
  );
}

/** Memoised so that panning the schedule does not re-render the tables. */
const ServiceCard = memo(function ServiceCard({ report, names, onStation }: { report: ServiceReport; names: Record<number, string> | undefined; onStation: (station: number) => void }) {
  return (
    <Card>
      <CardTitle>Service and the server's round</CardTitle>
      <ServiceStats report={report} names={names ?? NO_NAMES} onStation={onStation} />
    </Card>
  );
});
const NO_NAMES: Record<number, string> = {};

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
