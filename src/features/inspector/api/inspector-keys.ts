export const inspectorKeys = {
  all: ['frames'] as const,
  detail: (rigId: number, captureId: number, frameId: number) => [...inspectorKeys.all, rigId, captureId, frameId] as const,
  waveform: (rigId: number, captureId: number, frameId: number, bits: number) => [...inspectorKeys.detail(rigId, captureId, frameId), 'waveform', bits] as const,
};

export function framePath(rigId: number, captureId: number, frameId: number): string {
  return `/api/rigs/${rigId}/captures/${captureId}/frames/${frameId}`;
}
