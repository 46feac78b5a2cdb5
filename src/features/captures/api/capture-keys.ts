export const captureKeys = {
  all: ['captures'] as const,
  list: (rigId: number) => [...captureKeys.all, 'list', rigId] as const,
  detail: (rigId: number, captureId: number) => [...captureKeys.all, 'detail', rigId, captureId] as const,
  detection: (rigId: number, captureId: number) => [...captureKeys.detail(rigId, captureId), 'detection'] as const,
  job: (rigId: number, captureId: number) => [...captureKeys.detail(rigId, captureId), 'job'] as const,
};

export function capturePath(rigId: number, captureId: number): string {
  return `/api/rigs/${rigId}/captures/${captureId}`;
}
