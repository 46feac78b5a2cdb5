import { queryOptions, useSuspenseQuery } from '@tanstack/react-query';
import type { CaptureOverview } from '../../../../shared/schemas';
import { api } from '../../../lib/api';

export const overviewKeys = {
  all: ['overview'] as const,
  capture: (rigId: number, captureId: number) => [...overviewKeys.all, rigId, captureId] as const,
};

export function fetchOverview(rigId: number, captureId: number): Promise<CaptureOverview> {
  return api(`/api/rigs/${rigId}/captures/${captureId}/overview`);
}

export function overviewQueryOptions(rigId: number, captureId: number) {
  return queryOptions({ queryKey: overviewKeys.capture(rigId, captureId), queryFn: () => fetchOverview(rigId, captureId) });
}

export function useOverview(rigId: number, captureId: number) {
  return useSuspenseQuery(overviewQueryOptions(rigId, captureId)).data;
}
