import { queryOptions, useQuery, useSuspenseQuery } from '@tanstack/react-query';
import type { CaptureSummaryRow } from '../../../../shared/schemas';
import { api } from '../../../lib/api';
import { captureKeys } from './capture-keys';
import { captureScope } from '../../../lib/scope';

export function fetchCaptures(rigId: number): Promise<CaptureSummaryRow[]> {
  return api(`/api/rigs/${rigId}/captures`);
}

export function capturesQueryOptions(rigId: number) {
  return queryOptions({ queryKey: captureKeys.list(rigId), queryFn: () => fetchCaptures(rigId) });
}

/** Non-suspending: the list shows its own loading and error states inside the rig page. */
export function useCaptures(rigId: number) {
  return useQuery(capturesQueryOptions(rigId));
}

export function fetchCapture(rigId: number, captureId: number): Promise<CaptureSummaryRow> {
  return api(captureScope(rigId, captureId).path);
}

export function captureQueryOptions(rigId: number, captureId: number) {
  return queryOptions({ queryKey: captureKeys.detail(rigId, captureId), queryFn: () => fetchCapture(rigId, captureId) });
}

export function useCapture(rigId: number, captureId: number) {
  return useSuspenseQuery(captureQueryOptions(rigId, captureId)).data;
}
