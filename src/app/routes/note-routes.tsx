import { useParams, type LoaderFunctionArgs, type RouteObject } from 'react-router';
import { idParam } from '../../../shared/schemas';
import { notesQueryOptions } from '../../features/notes/api/get-notes';
import { CaptureNotes } from '../../features/notes/components/capture-notes';
import { queryClient } from '../query-client';
import { whenSignedIn } from './session-loaders';

const notesLoader = whenSignedIn(async ({ params, request }: LoaderFunctionArgs) => {
  const rig = idParam.safeParse(params.rigId);
  const capture = idParam.safeParse(params.captureId);
  if (!rig.success || !capture.success) return;
  const q = new URL(request.url).searchParams.get('q') ?? '';
  await queryClient.prefetchQuery(notesQueryOptions(rig.data, capture.data, q ? { q } : {}));
});

function CaptureNotesRoute() {
  const params = useParams();
  return <CaptureNotes rigId={idParam.parse(params.rigId)} captureId={idParam.parse(params.captureId)} />;
}

/** Children of the capture route: the capture's notes tab (search kept in ?q=). */
export const noteRoutes: RouteObject[] = [{ path: 'notes', loader: notesLoader, element: <CaptureNotesRoute />, shouldRevalidate: ({ currentUrl, nextUrl, defaultShouldRevalidate }) => (currentUrl.pathname !== nextUrl.pathname ? defaultShouldRevalidate : false) }];
