import { queryOptions, useQuery } from '@tanstack/react-query';
import type { FrameCall } from '../../../../shared/schemas';
import { api } from '../../../lib/api';
import { framePath, inspectorKeys } from './inspector-keys';

export function fetchFrameCall(rigId: number, captureId: number, frameId: number): Promise<FrameCall> {
  return api(`${framePath(rigId, captureId, frameId)}/call`);
}

/** The frame's call decode and its exchange; under the frame's key, so clearing the frame clears it. */
export function frameCallQueryOptions(rigId: number, captureId: number, frameId: number) {
  return queryOptions({
    queryKey: [...inspectorKeys.detail(rigId, captureId, frameId), 'call'] as const,
    queryFn: () => fetchFrameCall(rigId, captureId, frameId),
    // a new call-layer run changes what a frame decodes to; a minute is short enough to notice
    staleTime: 60_000,
  });
}

/** Non-suspending: the octets and link decode show at once, the call fills in. */
export function useFrameCall(rigId: number, captureId: number, frameId: number) {
  return useQuery(frameCallQueryOptions(rigId, captureId, frameId));
}
