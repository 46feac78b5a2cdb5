import { useParams, useSearchParams, type LoaderFunctionArgs, type RouteObject, type ShouldRevalidateFunctionArgs } from 'react-router';
import { idParam } from '../../../shared/schemas';
import { useRig } from '../../features/rigs/api/get-rig';
import { fieldMapQueryOptions } from '../../features/field-maps/api/get-field-map';
import { fieldMapsQueryOptions } from '../../features/field-maps/api/get-field-maps';
import { FieldMapEditor, type EditorViewState } from '../../features/field-maps/components/field-map-editor';
import { FieldMapList } from '../../features/field-maps/components/field-map-list';
import { checkDraft } from '../../features/field-maps/components/kept-results';
import { prefetchPreviewFrames } from '../../features/field-maps/api/get-preview-frames';
import { fieldNotesQueryOptions } from '../../features/notes/api/field-notes';
import { FieldNotes } from '../../features/notes/components/field-notes';
import { queryClient } from '../query-client';
import { whenSignedIn } from './session-loaders';

// The rig's field maps (children of `rigs/:rigId`, under the rig header). The editor's view state
// (layout, preview capture and frame, diffed versions) lives in the search params.

function pathOnly({ currentUrl, nextUrl, defaultShouldRevalidate }: ShouldRevalidateFunctionArgs) {
  return currentUrl.pathname !== nextUrl.pathname ? defaultShouldRevalidate : false;
}

/** Prefetches so the page paints with data; errors are shown in place by the page. */
const listLoader = whenSignedIn(async ({ params }: LoaderFunctionArgs) => {
  const rig = idParam.safeParse(params.rigId);
  if (rig.success) await queryClient.prefetchQuery(fieldMapsQueryOptions(rig.data));
});

const editorLoader = whenSignedIn(async ({ params, request }: LoaderFunctionArgs) => {
  const rig = idParam.safeParse(params.rigId);
  const map = idParam.safeParse(params.mapId);
  if (rig.success && map.success) {
    const search = new URL(request.url).searchParams;
    // the map first: the server answers in the order asked, and the page waits for the map alone
    const mapRead = queryClient.prefetchQuery(fieldMapQueryOptions(rig.data, map.data));
    // the preview's frames (one request) and the fields' notes load beside it; the page paints
    // without waiting for them (a field's notes button counts "…" for that moment)
    void prefetchPreviewFrames(queryClient, rig.data, num(search.get('capture')), num(search.get('frame'))).catch(() => undefined);
    void queryClient.prefetchQuery(fieldNotesQueryOptions(rig.data, map.data));
    await mapRead;
    // the version list (below the form) diffs the latest version against the one before: the
    // latest is the answer just read, the one before loads while the page paints
    const latest = queryClient.getQueryData(fieldMapQueryOptions(rig.data, map.data).queryKey);
    if (latest) {
      // the form's check of the map (tens of milliseconds on a large one) runs here, before the
      // first render, so that render paints the preview rather than a second one after it
      checkDraft(latest.document);
      const to = latest.latestVersion;
      if (latest.version === to) queryClient.setQueryData(fieldMapQueryOptions(rig.data, map.data, to).queryKey, (cached) => cached ?? latest);
      if (to > 1) void queryClient.prefetchQuery(fieldMapQueryOptions(rig.data, map.data, to - 1));
    }
  }
});

function FieldMapsRoute() {
  const rig = useRig(Number(useParams().rigId));
  return <FieldMapList rig={rig} />;
}

const num = (v: string | null) => (v !== null && /^\d+$/.test(v) ? Number(v) : null);

function FieldMapEditorRoute() {
  const params = useParams();
  const rig = useRig(Number(params.rigId));
  const [search, setSearch] = useSearchParams();
  const view: EditorViewState = {
    layout: num(search.get('layout')) ?? 0,
    captureId: num(search.get('capture')),
    frameId: num(search.get('frame')),
    diffFrom: num(search.get('from')),
    diffTo: num(search.get('to')),
  };
  const onView = (patch: Partial<EditorViewState>) => {
    const next = { ...view, ...patch };
    const out = new URLSearchParams();
    const put = (k: string, v: number | null) => {
      if (v !== null) out.set(k, String(v));
    };
    put('layout', next.layout || null);
    put('capture', next.captureId);
    put('frame', next.frameId);
    put('from', next.diffFrom);
    put('to', next.diffTo);
    setSearch(out, { replace: true });
  };
  const mapId = Number(params.mapId);
  // a new map id starts a new draft
  const rigId = rig.id;
  return (
    <FieldMapEditor
      key={mapId}
      rig={rig}
      mapId={mapId}
      view={view}
      onView={onView}
      renderFieldNotes={(fieldPath) => <FieldNotes key={fieldPath} rigId={rigId} mapId={mapId} fieldPath={fieldPath} />}
    />
  );
}

/** Children of the rig route (`rigs/:rigId`). */
export const fieldMapRoutes: RouteObject[] = [
  { path: 'field-maps', loader: listLoader, element: <FieldMapsRoute />, shouldRevalidate: pathOnly },
  { path: 'field-maps/:mapId', loader: editorLoader, element: <FieldMapEditorRoute />, shouldRevalidate: pathOnly },
];
