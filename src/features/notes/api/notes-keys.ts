import { captureScope } from '../../../lib/scope';
/** A capture's notes sit under its decoded views (captureScope), so a finished decode clears them with the rest. */
export const notesKeys = {
  capture: (rigId: number, captureId: number) => [...captureScope(rigId, captureId).decoded, 'notes'] as const,
  list: (rigId: number, captureId: number, filter: { frameId?: number; q?: string }) => [...notesKeys.capture(rigId, captureId), filter] as const,
};

export function notesPath(rigId: number, captureId: number): string {
  return `${captureScope(rigId, captureId).path}/notes`;
}

/** Notes of a field map's fields; they belong to the rig, not to a capture. */
export const fieldNotesKeys = {
  map: (rigId: number, mapId: number) => ['field-notes', rigId, mapId] as const,
};

export function fieldNotesPath(rigId: number, mapId: number): string {
  return `/api/rigs/${rigId}/field-maps/${mapId}/notes`;
}
