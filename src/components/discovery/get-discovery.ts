import { queryOptions, useQuery } from '@tanstack/react-query';
import type { CaptureDiscovery } from '../../../shared/schemas';
import { api } from '../../lib/api';
import { discoveryKeys, discoveryPath } from './discovery-keys';

export function fetchDiscovery(rigId: number, captureId: number): Promise<CaptureDiscovery> {
  return api(`${discoveryPath(rigId, captureId)}/discovery`);
}

export function discoveryQueryOptions(rigId: number, captureId: number) {
  return queryOptions({
    queryKey: discoveryKeys.capture(rigId, captureId),
    queryFn: () => fetchDiscovery(rigId, captureId),
    // the stored file never changes: once found, the answer holds (a new map choice drops it with the capture's views)
    staleTime: Infinity,
    refetchInterval: (q) => (q.state.data?.state === 'running' ? 300 : false),
  });
}

/** The settings finder's answer for a capture; polls while it runs (it reads at most 16 MB). */
export function useDiscovery(rigId: number, captureId: number, enabled = true) {
  return useQuery({ ...discoveryQueryOptions(rigId, captureId), enabled });
}
