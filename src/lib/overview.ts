import { queryOptions, useSuspenseQuery } from '@tanstack/react-query';
import type { CaptureOverview } from '../../shared/schemas';
import { api } from './api';
import { captureScope } from './scope';

export const overviewKeys = {
  capture: (rigId: number, captureId: number) => [...captureScope(rigId, captureId).decoded, 'overview'] as const,
};

export function fetchOverview(rigId: number, captureId: number): Promise<CaptureOverview> {
  return api(`${captureScope(rigId, captureId).path}/overview`);
}

export function overviewQueryOptions(rigId: number, captureId: number) {
  return queryOptions({ queryKey: overviewKeys.capture(rigId, captureId), queryFn: () => fetchOverview(rigId, captureId) });
}

export function useOverview(rigId: number, captureId: number) {
  return useSuspenseQuery(overviewQueryOptions(rigId, captureId)).data;
}
