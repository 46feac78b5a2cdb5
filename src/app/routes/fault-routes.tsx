import { useParams, useSearchParams, type LoaderFunctionArgs, type RouteObject, type ShouldRevalidateFunctionArgs } from 'react-router';
import { damageCauseSchema, idParam, type DamageCauseName } from '../../../shared/schemas';
import { ButtonLink } from '../../components/button';
import { Card, CardTitle } from '../../components/card';
import { ErrorNotice } from '../../components/notice';
import { useCapture } from '../../features/captures/api/get-captures';
import { faultsQueryOptions, useFaults } from '../../lib/faults';
import { FaultDeskView } from '../../features/fault-desk/components/fault-desk-view';
import { queryClient } from '../query-client';
import { whenSignedIn } from './session-loaders';
import { captureScope } from '../../lib/scope';

// The fault desk of a capture (…/faults?cause=&offset=), mounted under the capture route by router.tsx.
// The chosen group and page live in the search params.

function viewState(search: URLSearchParams): { cause: DamageCauseName | null; offset: number } {
  const cause = damageCauseSchema.safeParse(search.get('cause'));
  const offset = Number(search.get('offset') ?? 0);
  return { cause: cause.success ? cause.data : null, offset: Number.isInteger(offset) && offset > 0 ? offset : 0 };
}

const faultsLoader = whenSignedIn(async ({ params, request }: LoaderFunctionArgs) => {
  const rig = idParam.safeParse(params.rigId);
  const capture = idParam.safeParse(params.captureId);
  if (!rig.success || !capture.success) return;
  const { cause, offset } = viewState(new URL(request.url).searchParams);
  // errors are left to the page, which shows them in place
  await queryClient.prefetchQuery(faultsQueryOptions(rig.data, capture.data, cause, offset));
});

function pathOnly({ currentUrl, nextUrl, defaultShouldRevalidate }: ShouldRevalidateFunctionArgs) {
  return currentUrl.pathname !== nextUrl.pathname ? defaultShouldRevalidate : false;
}

function FaultDeskRoute() {
  const params = useParams();
  const rigId = Number(params.rigId);
  const captureId = Number(params.captureId);
  const [search] = useSearchParams();
  const { cause, offset } = viewState(search);
  const capture = useCapture(rigId, captureId);
  const desk = useFaults(rigId, captureId, cause, offset);
  const base = `${captureScope(rigId, captureId).page}`;
  if (capture.status !== 'decoded') {
    return (
      <Card>
        <CardTitle>Not decoded yet</CardTitle>
        <p className="mb-4 text-sm text-muted">The fault desk lists the damaged frames of a decode. Set this capture's channel roles and decode it first.</p>
        <ButtonLink to={`${base}/setup`}>Channel roles and decode</ButtonLink>
      </Card>
    );
  }
  if (desk.error) return <ErrorNotice error={desk.error} />;
  if (!desk.data) return <p className="text-sm text-muted">Loading the fault desk…</p>;
  if (!desk.data.available) {
    return (
      <Card>
        <CardTitle>No fault record for this decode</CardTitle>
        <p className="mb-4 text-sm text-muted">This capture was decoded before damage was recorded. Decode it again to fill the fault desk.</p>
        <ButtonLink to={`${base}/setup`}>Channel roles and decode</ButtonLink>
      </Card>
    );
  }
  const hrefFor = (c: DamageCauseName | null, at = 0) => {
    const q = new URLSearchParams();
    if (c) q.set('cause', c);
    if (at > 0) q.set('offset', String(at));
    const s = q.toString();
    return `${base}/faults${s ? `?${s}` : ''}`;
  };
  return <FaultDeskView desk={desk.data} cause={cause} hrefFor={hrefFor} frameHref={(id) => `${base}/frames/${id}`} rigSettingsHref={`/rigs/${rigId}/settings`} />;
}

export const faultRoutes: RouteObject[] = [{ path: 'faults', loader: faultsLoader, element: <FaultDeskRoute />, shouldRevalidate: pathOnly }];
