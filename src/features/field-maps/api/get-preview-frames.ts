import { queryOptions, useQuery, type QueryClient } from '@tanstack/react-query';
import type { PreviewFrames } from '../../../../shared/schemas';
import { api } from '../../../lib/api';
import { fieldMapKeys, fieldMapsPath } from './field-map-keys';

/**
 * The preview's frames in one request: the rig's decoded captures, the first I frames of one
 * (`captureId`, else the newest) with every octet, and `frameId` whole when asked for.
 */
export function fetchPreviewFrames(rigId: number, captureId: number | null, frameId: number | null): Promise<PreviewFrames> {
  const q = new URLSearchParams();
  if (captureId !== null) q.set('capture', String(captureId));
  if (frameId !== null) q.set('frame', String(frameId));
  const query = q.size ? `?${q}` : '';
  return api(`${fieldMapsPath(rigId)}/preview-frames${query}`);
}

export function previewFramesQueryOptions(rigId: number, captureId: number | null, frameId: number | null) {
  return queryOptions({
    queryKey: fieldMapKeys.previewFrames(rigId, captureId, frameId),
    queryFn: () => fetchPreviewFrames(rigId, captureId, frameId),
    // a finished decode clears a capture's keys (lib/scope) and refreshes the lists, under which the
    // newest capture's key sits; nothing else changes them
    staleTime: Infinity,
  });
}

export function usePreviewFrames(rigId: number, captureId: number | null, frameId: number | null, enabled = true) {
  return useQuery({ ...previewFramesQueryOptions(rigId, captureId, frameId), enabled });
}

/**
 * For the editor's loader: what the preview opens on, in one request. A frame named in the link
 * comes with the list; that answer also stands in for the list alone, which the preview reads first.
 */
export async function prefetchPreviewFrames(client: QueryClient, rigId: number, captureId: number | null, frameId: number | null): Promise<void> {
  if (frameId === null) return client.prefetchQuery(previewFramesQueryOptions(rigId, captureId, null));
  const answer = await client.fetchQuery(previewFramesQueryOptions(rigId, captureId, frameId));
  client.setQueryData(previewFramesQueryOptions(rigId, captureId, null).queryKey, (cached) => cached ?? { ...answer, frame: null });
}
