import { queryOptions, useQuery } from '@tanstack/react-query';
import type { Detection } from '../../../../shared/schemas';
import { api } from '../../../lib/api';
import { captureKeys } from './capture-keys';
import { captureScope } from '../../../lib/scope';

export function fetchDetection(rigId: number, captureId: number): Promise<Detection> {
  return api(`${captureScope(rigId, captureId).path}/detection`);
}

export function detectionQueryOptions(rigId: number, captureId: number) {
  // the stored file never changes, so neither does what was detected in it
  return queryOptions({ queryKey: captureKeys.detection(rigId, captureId), queryFn: () => fetchDetection(rigId, captureId), staleTime: Infinity });
}

export function useDetection(rigId: number, captureId: number) {
  return useQuery(detectionQueryOptions(rigId, captureId));
}
