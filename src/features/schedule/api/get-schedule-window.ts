import { keepPreviousData, queryOptions, useQuery } from '@tanstack/react-query';
import type { ScheduleView } from '../../../../shared/schemas';
import { api } from '../../../lib/api';
import { timingKeys, timingPath, type WindowQuery } from './timing-keys';

export function scheduleWindowQueryOptions(rigId: number, captureId: number, q: WindowQuery) {
  return queryOptions({
    queryKey: timingKeys.window(rigId, captureId, q),
    queryFn: ({ signal }): Promise<ScheduleView> =>
      api(`${timingPath(rigId, captureId)}/schedule?${new URLSearchParams({ from: String(q.from), to: String(q.to), width: String(q.width) })}`, { signal }),
    staleTime: 60_000,
  });
}

/** The drawn window; while the next one loads, the last one stays (the canvas re-scales it). */
export function useScheduleWindow(rigId: number, captureId: number, q: WindowQuery | null) {
  return useQuery({
    ...scheduleWindowQueryOptions(rigId, captureId, q ?? { from: 0, to: 1, width: 16 }),
    enabled: q !== null,
    placeholderData: keepPreviousData,
  });
}
