/** Keys start [view, rigId, captureId] so a finished decode can clear a capture's views together. */
export const notesKeys = {
  all: ['notes'] as const,
  capture: (rigId: number, captureId: number) => [...notesKeys.all, rigId, captureId] as const,
  list: (rigId: number, captureId: number, filter: { frameId?: number; q?: string }) => [...notesKeys.capture(rigId, captureId), filter] as const,
};

export function notesPath(rigId: number, captureId: number): string {
  return `/api/rigs/${rigId}/captures/${captureId}/notes`;
}

/** Notes of a field map's fields; they belong to the rig, not to a capture. */
export const fieldNotesKeys = {
  map: (rigId: number, mapId: number) => [...notesKeys.all, 'field-map', rigId, mapId] as const,
};

export function fieldNotesPath(rigId: number, mapId: number): string {
  return `/api/rigs/${rigId}/field-maps/${mapId}/notes`;
}
