import { useParams, type LoaderFunctionArgs, type RouteObject } from 'react-router';
import { idParam } from '../../../shared/schemas';
import { ButtonLink } from '../../components/button';
import { Card, CardTitle } from '../../components/card';
import { useCapture } from '../../features/captures/api/get-captures';
import { fieldHintsQueryOptions } from '../../components/discovery/get-field-hints';
import { FieldHintsView } from '../../features/discovery/components/field-hints-view';
import { useRig } from '../../features/rigs/api/get-rig';
import { queryClient } from '../query-client';
import { whenSignedIn } from './session-loaders';
import { captureScope } from '../../lib/scope';

// Views of what a capture reveals about its protocol, mounted under the capture route by router.tsx.

const fieldHintsLoader = whenSignedIn(async ({ params }: LoaderFunctionArgs) => {
  const rig = idParam.safeParse(params.rigId);
  const capture = idParam.safeParse(params.captureId);
  // errors (not decoded yet) are shown by the view in place
  if (rig.success && capture.success) await queryClient.prefetchQuery(fieldHintsQueryOptions(rig.data, capture.data, 0));
});

function FieldHintsRoute() {
  const params = useParams();
  const rigId = Number(params.rigId);
  const rig = useRig(rigId);
  const capture = useCapture(rigId, Number(params.captureId));
  if (capture.status !== 'decoded') {
    return (
      <Card>
        <CardTitle>Not decoded yet</CardTitle>
        <p className="mb-4 text-sm text-muted">Field hints are counted over a capture's decoded frames. Set its channel roles and decode it first.</p>
        <ButtonLink to={`${captureScope(rigId, capture.id).page}/setup`}>Channel roles and decode</ButtonLink>
      </Card>
    );
  }
  return <FieldHintsView rig={rig} capture={capture} />;
}

export const discoveryRoutes: RouteObject[] = [{ path: 'field-hints', loader: fieldHintsLoader, element: <FieldHintsRoute /> }];
