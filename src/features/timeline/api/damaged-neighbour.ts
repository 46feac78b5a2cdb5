import type { FrameDetail } from '../../../../shared/schemas';
import { api, isApiError } from '../../../lib/api';
import { timelineBase } from './timeline-keys';

/** The next or previous damaged frame from a frame, with its time; null when there is none. */
export async function fetchDamagedNeighbour(
  rigId: number,
  captureId: number,
  frameId: number,
  dir: 'next' | 'prev',
): Promise<{ id: number; t: number } | null> {
  try {
    const { id } = await api<{ id: number }>(`${timelineBase(rigId, captureId)}/frames/${frameId}/damaged?dir=${dir}`);
    const detail = await api<FrameDetail>(`${timelineBase(rigId, captureId)}/frames/${id}`);
    return { id, t: detail.frame.t };
  } catch (error) {
    if (isApiError(error, 404)) return null;
    throw error;
  }
}
