import type { ExchangeQuery } from '../../../../shared/schemas';
import { captureScope } from '../../../lib/scope';

/** Exchange lists and statistics of one capture (invalidate by `capture` when a new call-layer run becomes visible). */
export const exchangeKeys = {
  capture: (rigId: number, captureId: number) => [...captureScope(rigId, captureId).decoded, 'exchanges'] as const,
  list: (rigId: number, captureId: number, query: ExchangeListQuery) => [...exchangeKeys.capture(rigId, captureId), 'list', query] as const,
  stats: (rigId: number, captureId: number, stations: number[]) => [...exchangeKeys.capture(rigId, captureId), 'stats', stations] as const,
  /** the schedule's list: the first rows in one order, ranked by the server */
  ranked: (rigId: number, captureId: number, stations: number[], order: string) => [...exchangeKeys.capture(rigId, captureId), 'ranked', stations, order] as const,
};

/** The filters the views use; paging is done by the fetch function. */
export type ExchangeListQuery = Pick<ExchangeQuery, 'station' | 'file'>;
