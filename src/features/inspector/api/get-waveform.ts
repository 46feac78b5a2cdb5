import { queryOptions, useQuery } from '@tanstack/react-query';
import type { WaveformWindow } from '../../../../shared/schemas';
import { api } from '../../../lib/api';
import { framePath, inspectorKeys } from './inspector-keys';

/** columns the server thins each channel to: the widest drawing the inspector makes, one change pair per 3 px */
export const WAVEFORM_POINTS = 2000;

export function fetchWaveform(rigId: number, captureId: number, frameId: number, bits: number): Promise<WaveformWindow> {
  return api(`${framePath(rigId, captureId, frameId)}/waveform?bits=${bits}&points=${WAVEFORM_POINTS}`);
}

export function waveformQueryOptions(rigId: number, captureId: number, frameId: number, bits: number) {
  return queryOptions({
    queryKey: inspectorKeys.waveform(rigId, captureId, frameId, bits),
    queryFn: () => fetchWaveform(rigId, captureId, frameId, bits),
    staleTime: 5 * 60_000,
  });
}

/** Non-suspending: the waveform is read from the stored capture and may take a moment; the rest of the inspector does not wait. */
export function useWaveform(rigId: number, captureId: number, frameId: number, bits: number, enabled = true) {
  return useQuery({ ...waveformQueryOptions(rigId, captureId, frameId, bits), enabled });
}
