import { captureListKey, captureScope } from '../../../lib/scope';
/** Field maps of one rig, and the preview's capture lists and frames. */
export const fieldMapKeys = {
  all: ['field-maps'] as const,
  rig: (rigId: number) => [...fieldMapKeys.all, rigId] as const,
  list: (rigId: number) => [...fieldMapKeys.rig(rigId), 'list'] as const,
  detail: (rigId: number, mapId: number) => [...fieldMapKeys.rig(rigId), 'map', mapId] as const,
  version: (rigId: number, mapId: number, version: number | 'latest') => [...fieldMapKeys.detail(rigId, mapId), version] as const,
  // the preview reads captures: its keys sit under the rig's capture lists and the capture's decoded views (lib/scope)
  previewCaptures: (rigId: number) => [...captureListKey(rigId), 'field-map-preview'] as const,
  // the preview's frames: of the newest decoded capture (which a new capture changes) or of a chosen
  // one, with a frame asked for by id or without
  previewFrames: (rigId: number, captureId: number | null, frameId: number | null) =>
    captureId === null
      ? ([...captureListKey(rigId), 'field-map-preview', 'newest', frameId ?? 'first'] as const)
      : ([...captureScope(rigId, captureId).decoded, 'field-map-preview', frameId ?? 'first'] as const),
};

export function fieldMapsPath(rigId: number): string {
  return `/api/rigs/${rigId}/field-maps`;
}
