import { api } from '../../../lib/api';
import { captureScope } from '../../../lib/scope';

/** The next or previous damaged frame from a frame, with its time; null when there is none that way. */
export async function fetchDamagedNeighbour(
  rigId: number,
  captureId: number,
  frameId: number,
  dir: 'next' | 'prev',
): Promise<{ id: number; t: number } | null> {
  const found = await api<{ id: number | null; t: number | null }>(`${captureScope(rigId, captureId).path}/frames/${frameId}/damaged?dir=${dir}`);
  return found.id === null || found.t === null ? null : { id: found.id, t: found.t };
}
