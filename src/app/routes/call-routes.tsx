import { useEffect, useRef, type ReactNode } from 'react';
import { Navigate, useLocation, useParams, type LoaderFunctionArgs, type RouteObject, type ShouldRevalidateFunctionArgs } from 'react-router';
import { idParam } from '../../../shared/schemas';
import { ButtonLink } from '../../components/button';
import { Card, CardTitle } from '../../components/card';
import { ErrorNotice } from '../../components/notice';
import { capturesQueryOptions, useCapture, useCaptures } from '../../features/captures/api/get-captures';
import { useRig } from '../../features/rigs/api/get-rig';
import { comparisonKeys, comparisonQueryOptions } from '../../features/compare/api/get-comparison';
import { CompareView } from '../../features/compare/components/compare-view';
import { recoveredFileKeys } from '../../features/recovered-files/api/file-keys';
import { recoveredFilesQueryOptions } from '../../features/recovered-files/api/get-files';
import { RecoveredFileList } from '../../features/recovered-files/components/recovered-file-list';
import { exchangeKeys } from '../../features/schedule/api/exchange-keys';
import { callLayerQueryOptions, useCallLayer } from '../../lib/call-layer';
import { exchangeExportUrl, useExchanges } from '../../features/schedule/api/get-exchanges';
import { ExportLinks } from '../../components/export-links';
import { timelineKeys } from '../../features/timeline/api/timeline-keys';
import { timelineSearchFor } from '../../features/schedule/components/exchange-order';
import { exchangeHref } from '../../components/exchange-results';
import { ExchangeTable } from '../../features/schedule/components/exchange-table';
import { serviceQueryOptions } from '../../features/schedule/api/get-service';
import { scheduleWindowQueryOptions } from '../../features/schedule/api/get-schedule-window';
import { rankedExchangesQueryOptions } from '../../features/schedule/api/get-ranked-exchanges';
import { parseExchangeOrder } from '../../features/schedule/components/exchange-order';
import { scheduleAreaWidth } from '../../features/schedule/components/schedule-width';
import { ALL_STATIONS, parseStation } from '../../features/schedule/components/schedule-lists';
import { clampRange, fetchFor, parseRange } from '../../features/schedule/components/view-range';
import { ScheduleView } from '../../features/schedule/components/schedule-view';
import { queryClient } from '../query-client';
import { whenSignedIn } from './session-loaders';
import { captureScope } from '../../lib/scope';

// The call-layer views of a capture (schedule with round trips, recovered files, compare), mounted under the
// capture route by router.tsx. Their view state (station, order, open file, B capture) lives in
// the search params, so changing it must not rerun loaders.

function ids(params: LoaderFunctionArgs['params']): { rigId: number; captureId: number } | null {
  const rig = idParam.safeParse(params.rigId);
  const capture = idParam.safeParse(params.captureId);
  return rig.success && capture.success ? { rigId: rig.data, captureId: capture.data } : null;
}

/** Prefetches so the page paints with data; errors are left to the page, which shows them in place. */
function prefetch(what: (rigId: number, captureId: number) => Promise<unknown>) {
  return whenSignedIn(async ({ params }: LoaderFunctionArgs) => {
    const got = ids(params);
    if (got) await what(got.rigId, got.captureId);
  });
}

function pathOnly({ currentUrl, nextUrl, defaultShouldRevalidate }: ShouldRevalidateFunctionArgs) {
  return currentUrl.pathname !== nextUrl.pathname ? defaultShouldRevalidate : false;
}

function useIds() {
  const params = useParams();
  return { rigId: Number(params.rigId), captureId: Number(params.captureId) };
}

/**
 * Shows the view once the capture is decoded and its call layer has a visible run; while a run is
 * queued or running it says so (and polls). When a new run becomes visible, exchange and file
 * ids change, so every call-layer query of the capture is refetched.
 */
function CallLayerGate({ children }: { children: ReactNode }) {
  const { rigId, captureId } = useIds();
  const capture = useCapture(rigId, captureId);
  const layer = useCallLayer(rigId, captureId);
  const runId = layer.data?.current?.runId ?? null;
  const seen = useRef(runId);
  useEffect(() => {
    if (seen.current !== null && runId !== null && seen.current !== runId) {
      void queryClient.invalidateQueries({ queryKey: exchangeKeys.capture(rigId, captureId) });
      void queryClient.invalidateQueries({ queryKey: recoveredFileKeys.capture(rigId, captureId) });
      void queryClient.invalidateQueries({ queryKey: comparisonKeys.rig(rigId) });
      // timeline rows carry their frames' call markers
      void queryClient.invalidateQueries({ queryKey: timelineKeys.capture(rigId, captureId) });
    }
    seen.current = runId;
  }, [runId, rigId, captureId]);

  if (capture.status !== 'decoded') {
    return (
      <Card>
        <CardTitle>Not decoded yet</CardTitle>
        <p className="mb-4 text-sm text-muted">Exchanges and files come from the decoded frames. Set this capture's channel roles and decode it first.</p>
        <ButtonLink to={`${captureScope(rigId, captureId).page}/setup`}>Channel roles and decode</ButtonLink>
      </Card>
    );
  }
  if (layer.error) return <ErrorNotice error={layer.error} />;
  if (!layer.data) return <p className="text-sm text-muted">Loading the call layer…</p>;
  const pending = layer.data.pending;
  const notice =
    pending && (pending.state === 'queued' || pending.state === 'running') ? (
      <p role="status" className="rounded-md border border-line bg-raised px-3 py-2 text-sm">
        Reading calls with the field map “{layer.data.mapName}”… {layer.data.current ? 'The results below are from the previous run.' : ''}
      </p>
    ) : pending?.state === 'failed' ? (
      <ErrorNotice>The call layer could not be run with “{layer.data.mapName}”: {pending.error ?? 'no reason given'}.</ErrorNotice>
    ) : null;
  if (!layer.data.current) return notice ?? <p className="text-sm text-muted">The call layer has not run on this capture yet.</p>;
  return (
    <div className="space-y-4">
      {notice}
      <div key={runId}>{children}</div>
    </div>
  );
}

function ScheduleRoute() {
  const { rigId, captureId } = useIds();
  const rig = useRig(rigId);
  return (
    <CallLayerGate>
      <ScheduleView rig={rig} captureId={captureId} />
    </CallLayerGate>
  );
}

/** Links made before the schedule replaced the round-trips page keep working. */
function RoundTripsRedirect() {
  const { search } = useLocation();
  return <Navigate to={`../schedule${search}`} replace relative="path" />;
}

function FileExchanges({ rigId, captureId, fileId }: { rigId: number; captureId: number; fileId: number }) {
  const list = useExchanges(rigId, captureId, { file: fileId });
  const base = `${captureScope(rigId, captureId).page}`;
  if (list.error) return <ErrorNotice error={list.error} />;
  if (!list.data) return <p className="text-sm text-muted">Loading exchanges…</p>;
  return (
    <div className="space-y-2">
      <ExportLinks href={(format) => exchangeExportUrl(rigId, captureId, { file: fileId }, format)} what="the exchanges about this file" />
      <ExchangeTable
        rows={list.data.rows}
        frameHref={(id) => `${base}/frames/${id}`}
        timelineHref={(row) => `${base}/timeline${timelineSearchFor(row)}`}
        exchangeHref={(id) => exchangeHref(base, id)}
        caption="Exchanges about this file"
      />
    </div>
  );
}

function RecoveredFilesRoute() {
  const { rigId, captureId } = useIds();
  const rig = useRig(rigId);
  return (
    <CallLayerGate>
      <RecoveredFileList rig={rig} captureId={captureId} renderExchanges={(fileId) => <FileExchanges rigId={rigId} captureId={captureId} fileId={fileId} />} />
    </CallLayerGate>
  );
}

function CompareRoute() {
  const { rigId, captureId } = useIds();
  const rig = useRig(rigId);
  const capture = useCapture(rigId, captureId);
  const captures = useCaptures(rigId);
  return (
    <CallLayerGate>
      {captures.error ? <ErrorNotice error={captures.error} /> : null}
      {captures.data ? <CompareView rig={rig} capture={capture} captures={captures.data} /> : <p className="text-sm text-muted">Loading captures…</p>}
    </CallLayerGate>
  );
}

/**
 * The schedule paints once its service statistics are in (they give the time range). The first
 * window of the lanes, sized to the canvas, and the first rows of the exchange list start as soon as
 * that range is known, while the page renders; the round-trip figures wait for the lanes (on a long
 * capture they read every exchange and would hold the window up on the server).
 */
const scheduleLoader = whenSignedIn(async ({ params, request }: LoaderFunctionArgs) => {
  const got = ids(params);
  if (!got) return;
  const { rigId, captureId } = got;
  const [, service] = await Promise.all([queryClient.prefetchQuery(callLayerQueryOptions(rigId, captureId)), queryClient.ensureQueryData(serviceQueryOptions(rigId, captureId)).catch(() => null)]);
  const search = new URL(request.url).searchParams;
  const extent = service?.extent;
  const station = parseStation(search.get('station'));
  void queryClient.prefetchQuery(rankedExchangesQueryOptions(rigId, captureId, station === ALL_STATIONS ? [] : [station], parseExchangeOrder(search.get('order'))));
  // a linked exchange decides the range itself, once it is loaded
  if (!extent || (search.has('ex') && !parseRange(search.get('from'), search.get('to')))) return;
  // the range the view starts from: the link's, else the whole capture
  const linked = parseRange(search.get('from'), search.get('to'));
  const view = linked ? clampRange(linked, extent) : { from: extent.from, to: extent.to };
  void queryClient.prefetchQuery(scheduleWindowQueryOptions(rigId, captureId, fetchFor(view, scheduleAreaWidth(), extent)));
});

/** Children of the capture route (`rigs/:rigId/captures/:captureId`). */
export const callRoutes: RouteObject[] = [
  { path: 'schedule', loader: scheduleLoader, element: <ScheduleRoute />, shouldRevalidate: pathOnly },
  { path: 'round-trips', element: <RoundTripsRedirect /> },
  {
    path: 'files',
    loader: prefetch((rigId, captureId) =>
      Promise.all([queryClient.prefetchQuery(callLayerQueryOptions(rigId, captureId)), queryClient.prefetchQuery(recoveredFilesQueryOptions(rigId, captureId))]),
    ),
    element: <RecoveredFilesRoute />,
    shouldRevalidate: pathOnly,
  },
  {
    path: 'compare',
    loader: whenSignedIn(async ({ params, request }: LoaderFunctionArgs) => {
      const got = ids(params);
      if (!got) return;
      const b = Number(new URL(request.url).searchParams.get('with'));
      await Promise.all([
        queryClient.prefetchQuery(callLayerQueryOptions(got.rigId, got.captureId)),
        queryClient.prefetchQuery(capturesQueryOptions(got.rigId)),
        Number.isInteger(b) && b > 0 && b !== got.captureId ? queryClient.prefetchQuery(comparisonQueryOptions(got.rigId, got.captureId, b)) : null,
      ]);
    }),
    element: <CompareRoute />,
    shouldRevalidate: pathOnly,
  },
];
