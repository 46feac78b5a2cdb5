import { queryOptions, useQuery } from '@tanstack/react-query';
import type { CaptureCallLayer } from '../../shared/schemas';
import { api } from './api';
import { captureScope } from './scope';

/** The capture's call layer: chosen field map, visible run, pending run. */
export const callLayerKeys = {
  capture: (rigId: number, captureId: number) => [...captureScope(rigId, captureId).decoded, 'call-layer'] as const,
};

export function fetchCallLayer(rigId: number, captureId: number): Promise<CaptureCallLayer> {
  return api(`${captureScope(rigId, captureId).path}/field-map`);
}

export function callLayerQueryOptions(rigId: number, captureId: number) {
  return queryOptions({ queryKey: callLayerKeys.capture(rigId, captureId), queryFn: () => fetchCallLayer(rigId, captureId) });
}

/** Polls while a run is queued or running, so the views fill in when it finishes. */
export function useCallLayer(rigId: number, captureId: number) {
  return useQuery({
    ...callLayerQueryOptions(rigId, captureId),
    refetchInterval: (q) => {
      const d = q.state.data;
      if (!d) return false;
      const busy = d.pending && (d.pending.state === 'queued' || d.pending.state === 'running');
      if (busy) return 1000;
      // decoded but no run yet: the decode job starts one; look now and then rather than every second
      return d.current ? false : 5000;
    },
  });
}
