import { queryOptions, useSuspenseQuery } from '@tanstack/react-query';
import type { FrameDetail } from '../../../../shared/schemas';
import { api } from '../../../lib/api';
import { framePath, inspectorKeys } from './inspector-keys';

export function fetchFrame(rigId: number, captureId: number, frameId: number): Promise<FrameDetail> {
  return api(framePath(rigId, captureId, frameId));
}

export function frameQueryOptions(rigId: number, captureId: number, frameId: number) {
  // a decoded frame does not change until a re-decode, which gives it a new id
  return queryOptions({ queryKey: inspectorKeys.detail(rigId, captureId, frameId), queryFn: () => fetchFrame(rigId, captureId, frameId), staleTime: 5 * 60_000 });
}

export function useFrame(rigId: number, captureId: number, frameId: number) {
  return useSuspenseQuery(frameQueryOptions(rigId, captureId, frameId)).data;
}
