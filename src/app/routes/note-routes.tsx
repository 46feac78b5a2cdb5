import { useParams, type RouteObject } from 'react-router';
import { idParam } from '../../../shared/schemas';
import { CaptureNotes } from '../../features/notes/components/capture-notes';

function CaptureNotesRoute() {
  const params = useParams();
  return <CaptureNotes rigId={idParam.parse(params.rigId)} captureId={idParam.parse(params.captureId)} />;
}

/** Children of the capture route: the capture's notes tab (search kept in ?q=). */
export const noteRoutes: RouteObject[] = [{ path: 'notes', element: <CaptureNotesRoute /> }];
