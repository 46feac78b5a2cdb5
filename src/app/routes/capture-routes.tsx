import { data, isRouteErrorResponse, Outlet, useLocation, useParams, useRouteError, type LoaderFunctionArgs, type ShouldRevalidateFunctionArgs } from 'react-router';
import { idParam, type CaptureSummaryRow } from '../../../shared/schemas';
import { ButtonLink } from '../../components/button';
import { Card, CardTitle } from '../../components/card';
import { NotFound } from '../../components/not-found';
import { isApiError } from '../../lib/api';
import { errorText } from '../../lib/error-text';
import { rigQueryOptions, useRig } from '../../features/rigs/api/get-rig';
import { captureQueryOptions, capturesQueryOptions, useCapture } from '../../features/captures/api/get-captures';
import { CaptureList } from '../../features/captures/components/capture-list';
import { jobQueryOptions } from '../../lib/decode-job';
import { detectionQueryOptions } from '../../features/captures/api/get-detection';
import { CaptureNav } from '../../features/captures/components/capture-nav';
import { CaptureSetup } from '../../features/captures/components/capture-setup';
import { canCapture } from '../../lib/permissions';
import { UploadPanel } from '../../features/captures/components/upload-panel';
import { overviewQueryOptions } from '../../lib/overview';
import { CaptureOverview } from '../../features/overview/components/capture-overview';
import { TimingCard } from '../../features/schedule/components/timing-card';
import { discoveryQueryOptions } from '../../components/discovery/get-discovery';
import { DecodeDiagnosis } from '../../components/discovery/decode-diagnosis';
import { CaptureMapChoice } from '../../features/field-maps/components/capture-map-choice';
import { cursorAtQueryOptions, timelineCountQueryOptions, timelineRowsQueryOptions } from '../../features/timeline/api/get-timeline';
import { filtersFromParams } from '../../features/timeline/api/timeline-filters';
import { TimelineView } from '../../features/timeline/components/timeline-view';
import { frameQueryOptions, useFrame } from '../../features/inspector/api/get-frame';
import { FrameNotes } from '../../features/notes/components/frame-notes';
import { SamplesElsewhere } from '../../features/captures/components/samples-elsewhere';
import { FrameInspector, WAVEFORM_CONTEXT_BITS } from '../../features/inspector/components/frame-inspector';
import { frameCallQueryOptions } from '../../features/inspector/api/get-frame-call';
import { waveformQueryOptions } from '../../features/inspector/api/get-waveform';
import { queryClient } from '../query-client';
import { whenSignedIn } from './session-loaders';
import { captureScope } from '../../lib/scope';

function idFrom(value: string | undefined, what: string): number {
  const parsed = idParam.safeParse(value);
  if (!parsed.success) throw data(`No such ${what}`, { status: 404 });
  return parsed.data;
}

export const captureLoader = whenSignedIn(async ({ params }: LoaderFunctionArgs) => {
  const rigId = idFrom(params.rigId, 'rig');
  const captureId = idFrom(params.captureId, 'capture');
  await Promise.all([queryClient.ensureQueryData(rigQueryOptions(rigId)), queryClient.ensureQueryData(captureQueryOptions(rigId, captureId))]);
});

export const capturesLoader = whenSignedIn(async ({ params }: LoaderFunctionArgs) => {
  // the list shows its own loading state; waiting here only keeps the old tab until it can paint
  await queryClient.prefetchQuery(capturesQueryOptions(idFrom(params.rigId, 'rig')));
});

export const uploadLoader = whenSignedIn(async ({ params }: LoaderFunctionArgs) => {
  await queryClient.ensureQueryData(rigQueryOptions(idFrom(params.rigId, 'rig')));
});

export const overviewLoader = whenSignedIn(async ({ params }: LoaderFunctionArgs) => {
  const rigId = idFrom(params.rigId, 'rig');
  const captureId = idFrom(params.captureId, 'capture');
  const capture = await queryClient.ensureQueryData(captureQueryOptions(rigId, captureId));
  if (capture.status === 'decoded') await queryClient.ensureQueryData(overviewQueryOptions(rigId, captureId));
});

/** What the channel-role form starts from: the detection of the file's head, and the last decode's progress. */
export const setupLoader = whenSignedIn(async ({ params }: LoaderFunctionArgs) => {
  const rigId = idFrom(params.rigId, 'rig');
  const captureId = idFrom(params.captureId, 'capture');
  const capture = await queryClient.ensureQueryData(captureQueryOptions(rigId, captureId));
  // the settings finder starts at once; the page shows its progress
  void queryClient.prefetchQuery(discoveryQueryOptions(rigId, captureId));
  await Promise.all([
    // a capture decoded in the browser has no file to detect from
    capture.samplesKept ? queryClient.prefetchQuery(detectionQueryOptions(rigId, captureId)) : null,
    capture.job !== null ? queryClient.prefetchQuery(jobQueryOptions(rigId, captureId)) : null,
  ]);
});

/** The first page of rows where the URL's anchor says, and the match count, so the list paints with its rows. */
export const timelineLoader = whenSignedIn(async ({ params, request }: LoaderFunctionArgs) => {
  const rigId = idFrom(params.rigId, 'rig');
  const captureId = idFrom(params.captureId, 'capture');
  const capture = await queryClient.ensureQueryData(captureQueryOptions(rigId, captureId));
  if (capture.status !== 'decoded') return;
  const search = new URL(request.url).searchParams;
  const { filters } = filtersFromParams(search);
  const at = Number(search.get('at'));
  // errors are left to the view, which shows them in place
  void queryClient.prefetchQuery(timelineCountQueryOptions(rigId, captureId, filters));
  const start = at > 0 ? ((await queryClient.fetchQuery(cursorAtQueryOptions(rigId, captureId, filters, at)).catch(() => null))?.cursor ?? null) : null;
  await queryClient.prefetchInfiniteQuery(timelineRowsQueryOptions(rigId, captureId, filters, start));
});

export const frameLoader = whenSignedIn(async ({ params }: LoaderFunctionArgs) => {
  const rigId = idFrom(params.rigId, 'rig');
  const captureId = idFrom(params.captureId, 'capture');
  const frameId = idFrom(params.frameId, 'frame');
  // the call and the waveform fill in beside the frame; the page waits only for the frame itself
  void queryClient.prefetchQuery(frameCallQueryOptions(rigId, captureId, frameId));
  const [capture] = await Promise.all([queryClient.ensureQueryData(captureQueryOptions(rigId, captureId)), queryClient.ensureQueryData(frameQueryOptions(rigId, captureId, frameId))]);
  if (hasSamples(capture)) void queryClient.prefetchQuery(waveformQueryOptions(rigId, captureId, frameId, WAVEFORM_CONTEXT_BITS));
});

/** The timeline keeps its view in the search params; changing them must not rerun loaders on every scroll. */
export function onlyOnPathChange({ currentUrl, nextUrl, defaultShouldRevalidate }: ShouldRevalidateFunctionArgs) {
  return currentUrl.pathname !== nextUrl.pathname ? defaultShouldRevalidate : false;
}

function useIds() {
  const params = useParams();
  return { rigId: Number(params.rigId), captureId: Number(params.captureId), frameId: Number(params.frameId) };
}

export function CapturesRoute() {
  const rig = useRig(useIds().rigId);
  return <CaptureList rig={rig} />;
}

export function UploadRoute() {
  const rig = useRig(useIds().rigId);
  return (
    <div className="space-y-4">
      <header>
        <p className="text-xs text-muted">
          <ButtonLink to={`/rigs/${rig.id}/captures`} variant="ghost" className="-ml-3 px-3 py-0.5 text-xs">
            ← Captures of {rig.name}
          </ButtonLink>
        </p>
        <h1 className="text-xl font-semibold">New capture</h1>
      </header>
      {canCapture.upload(rig.myRole) ? (
        <UploadPanel rigId={rig.id} />
      ) : (
        <Card>
          <CardTitle>Uploading needs an analyst</CardTitle>
          <p className="text-sm text-muted">You are a viewer on this rig: you can read every capture but not add one. Ask the rig's owner for the analyst role.</p>
        </Card>
      )}
    </div>
  );
}

export function CaptureRoute() {
  const { rigId, captureId } = useIds();
  const capture = useCapture(rigId, captureId);
  return (
    <div className="space-y-5">
      <CaptureNav rigId={rigId} capture={capture} />
      <Outlet />
    </div>
  );
}

export function CaptureSetupRoute() {
  const { rigId, captureId } = useIds();
  const rig = useRig(rigId);
  const capture = useCapture(rigId, captureId);
  if (!capture.samplesKept) return <SamplesElsewhere rigId={rigId} captureId={captureId} />;
  return <CaptureSetup rig={rig} captureId={captureId} />;
}

function NotDecodedYet({ rigId, captureId }: { rigId: number; captureId: number }) {
  return (
    <Card>
      <CardTitle>Not decoded yet</CardTitle>
      <p className="mb-4 text-sm text-muted">This capture has no frames yet. Set its channel roles and decode it first.</p>
      <ButtonLink to={`${captureScope(rigId, captureId).page}/setup`}>Channel roles and decode</ButtonLink>
    </Card>
  );
}

export function OverviewRoute() {
  const { rigId, captureId } = useIds();
  const capture = useCapture(rigId, captureId);
  const rig = useRig(rigId);
  if (capture.status !== 'decoded') return <NotDecodedYet rigId={rigId} captureId={captureId} />;
  return (
    <div className="space-y-5">
      <DecodeDiagnosis rig={rig} capture={capture} />
      <CaptureOverview rigId={rigId} captureId={captureId} timing={<TimingCard rigId={rigId} captureId={captureId} />} />
      <CaptureMapChoice rig={rig} captureId={captureId} />
    </div>
  );
}

export function TimelineRoute() {
  const { rigId, captureId } = useIds();
  const rig = useRig(rigId);
  const capture = useCapture(rigId, captureId);
  if (capture.status !== 'decoded') return <NotDecodedYet rigId={rigId} captureId={captureId} />;
  return <TimelineView rig={rig} capture={capture} />;
}

/** A frame log holds cut frames only: no line samples to draw a waveform from. */
function hasSamples(capture: CaptureSummaryRow): boolean {
  return capture.samplesKept && (capture.settings?.format ?? capture.format) !== 'framelog';
}

export function FrameRoute() {
  const { rigId, captureId, frameId } = useIds();
  const capture = useCapture(rigId, captureId);
  const location = useLocation();
  const fromTimeline = (location.state as { timelineSearch?: string } | null)?.timelineSearch;
  const backTo = `${captureScope(rigId, captureId).page}/timeline${fromTimeline ?? `?sel=${frameId}`}`;
  const octetCount = useFrame(rigId, captureId, frameId).frame.hexAll.length / 2;
  return (
    <div className="space-y-4">
      <FrameInspector key={frameId} rigId={rigId} captureId={captureId} frameId={frameId} backTo={backTo} hasSamples={hasSamples(capture)} samplesKept={capture.samplesKept} />
      <FrameNotes key={`notes-${frameId}`} rigId={rigId} captureId={captureId} frameId={frameId} octetCount={octetCount} />
    </div>
  );
}

export function CaptureRouteError() {
  const error = useRouteError();
  if (isApiError(error, 404) || (isRouteErrorResponse(error) && error.status === 404)) {
    return <NotFound what="capture" message="This capture, rig or frame does not exist, was deleted, or you are not a member of its rig." />;
  }
  if (isApiError(error, 403)) return <NotFound what="capture" message="You are not a member of this rig. Ask its owner for an invitation." />;
  return (
    <div className="mx-auto max-w-lg py-16 text-center">
      <h1 className="text-xl font-semibold">This capture could not be shown</h1>
      <p className="mt-2 text-muted">{errorText(error)}</p>
    </div>
  );
}
