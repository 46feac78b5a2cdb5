/** Field maps of one rig; the preview's capture lists and frames are keyed under the same rig. */
export const fieldMapKeys = {
  all: ['field-maps'] as const,
  rig: (rigId: number) => [...fieldMapKeys.all, rigId] as const,
  list: (rigId: number) => [...fieldMapKeys.rig(rigId), 'list'] as const,
  detail: (rigId: number, mapId: number) => [...fieldMapKeys.rig(rigId), 'map', mapId] as const,
  version: (rigId: number, mapId: number, version: number | 'latest') => [...fieldMapKeys.detail(rigId, mapId), version] as const,
  previewCaptures: (rigId: number) => [...fieldMapKeys.rig(rigId), 'preview-captures'] as const,
  previewFrames: (rigId: number, captureId: number) => [...fieldMapKeys.rig(rigId), 'preview-frames', captureId] as const,
  previewFrame: (rigId: number, captureId: number, frameId: number) => [...fieldMapKeys.rig(rigId), 'preview-frame', captureId, frameId] as const,
};

export function fieldMapsPath(rigId: number): string {
  return `/api/rigs/${rigId}/field-maps`;
}
