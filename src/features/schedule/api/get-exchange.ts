import { queryOptions, useQuery } from '@tanstack/react-query';
import type { ExchangeRow } from '../../../../shared/schemas';
import { api } from '../../../lib/api';
import { timingKeys, timingPath } from './timing-keys';

export function timingExchangeQueryOptions(rigId: number, captureId: number, id: number) {
  return queryOptions({
    queryKey: timingKeys.exchange(rigId, captureId, id),
    queryFn: ({ signal }): Promise<ExchangeRow> => api(`${timingPath(rigId, captureId)}/exchanges/${id}`, { signal }),
    staleTime: 60_000,
  });
}

/** The exchange a span (or a list row) opened, with its frame ids. */
export function useTimingExchange(rigId: number, captureId: number, id: number | null) {
  return useQuery({ ...timingExchangeQueryOptions(rigId, captureId, id ?? 0), enabled: id !== null });
}
