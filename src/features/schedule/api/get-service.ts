import { queryOptions, useQuery } from '@tanstack/react-query';
import type { ServiceView } from '../../../../shared/schemas';
import { api } from '../../../lib/api';
import { timingKeys, timingPath } from './timing-keys';

export function serviceQueryOptions(rigId: number, captureId: number) {
  return queryOptions({
    queryKey: timingKeys.service(rigId, captureId),
    queryFn: ({ signal }): Promise<ServiceView> => api(`${timingPath(rigId, captureId)}/service`, { signal }),
    staleTime: 60_000,
  });
}

export function useService(rigId: number, captureId: number) {
  return useQuery(serviceQueryOptions(rigId, captureId));
}
