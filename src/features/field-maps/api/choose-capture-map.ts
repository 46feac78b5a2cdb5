import { useMutation, useQueryClient } from '@tanstack/react-query';
import type { CaptureCallLayer } from '../../../../shared/schemas';
import { api } from '../../../lib/api';
import { callLayerKeys } from '../../../lib/call-layer';
import { captureScope } from '../../../lib/scope';

/** Chooses the map (and version; none = follow the latest) a capture's calls are decoded with; the call layer runs again. */
export function chooseCaptureMap(rigId: number, captureId: number, mapId: number, version: number | null): Promise<CaptureCallLayer> {
  return api(`${captureScope(rigId, captureId).path}/field-map`, { method: 'PUT', body: version === null ? { mapId } : { mapId, version } });
}

export function useChooseCaptureMap(rigId: number, captureId: number) {
  const client = useQueryClient();
  return useMutation({
    mutationFn: ({ mapId, version }: { mapId: number; version: number | null }) => chooseCaptureMap(rigId, captureId, mapId, version),
    onSuccess: (layer) => client.setQueryData(callLayerKeys.capture(rigId, captureId), layer),
  });
}
