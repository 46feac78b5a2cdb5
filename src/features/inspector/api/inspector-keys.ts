import { captureScope } from '../../../lib/scope';
export const inspectorKeys = {
  detail: (rigId: number, captureId: number, frameId: number) => [...captureScope(rigId, captureId).decoded, 'frames', frameId] as const,
  waveform: (rigId: number, captureId: number, frameId: number, bits: number) => [...inspectorKeys.detail(rigId, captureId, frameId), 'waveform', bits] as const,
};

export function framePath(rigId: number, captureId: number, frameId: number): string {
  return `${captureScope(rigId, captureId).path}/frames/${frameId}`;
}
