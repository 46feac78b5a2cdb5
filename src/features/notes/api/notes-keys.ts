/** Keys start [view, rigId, captureId] so a finished decode can clear a capture's views together. */
export const notesKeys = {
  all: ['notes'] as const,
  capture: (rigId: number, captureId: number) => [...notesKeys.all, rigId, captureId] as const,
  list: (rigId: number, captureId: number, filter: { frameId?: number; q?: string }) => [...notesKeys.capture(rigId, captureId), filter] as const,
};

export function notesPath(rigId: number, captureId: number): string {
  return `/api/rigs/${rigId}/captures/${captureId}/notes`;
}
