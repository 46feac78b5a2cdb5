import { queryOptions, useQuery } from '@tanstack/react-query';
import type { ExchangeOutcomeName, ExchangePage, ExchangeRow } from '../../../../shared/schemas';
import { api } from '../../../lib/api';
import { captureScope } from '../../../lib/scope';
import type { ExchangeOrder } from '../components/exchange-order';
import { exchangeKeys } from './exchange-keys';

/** How many rows the schedule's list shows in one order; the export has the rest. */
export const RANKED_LIMIT = 300;

export interface RankedExchanges {
  rows: ExchangeRow[];
  /** exchanges matching the station filter, all of them ranked by the server */
  total: number;
}

const OUTCOMES: ExchangeOutcomeName[] = ['answered', 'retried', 'unanswered'];

function page(rigId: number, captureId: number, q: Record<string, string>, stations: number[], signal?: AbortSignal): Promise<ExchangePage> {
  const params = new URLSearchParams(q);
  if (stations.length) params.set('station', stations.join(','));
  return api(`${captureScope(rigId, captureId).path}/exchanges?${params}`, { signal });
}

/**
 * The first rows of the capture's exchanges in one order, ranked by the server over every exchange
 * rather than by the page over the first thousands: slowest by round trip (unanswered last), or one
 * outcome first and the rest after it, each part in time order.
 */
export async function fetchRankedExchanges(rigId: number, captureId: number, stations: number[], order: ExchangeOrder, signal?: AbortSignal): Promise<RankedExchanges> {
  const limit = String(RANKED_LIMIT);
  if (order === 'time' || order === 'slowest') {
    const p = await page(rigId, captureId, { limit, sort: order === 'time' ? 'time' : 'rtt-desc' }, stations, signal);
    return { rows: p.rows, total: p.total };
  }
  const others = OUTCOMES.filter((o) => o !== order).join(',');
  // both at once: the rest fills the list when the chosen outcome has fewer rows, and counts for the total
  const [first, rest] = await Promise.all([
    page(rigId, captureId, { limit, sort: 'time', outcome: order }, stations, signal),
    page(rigId, captureId, { limit, sort: 'time', outcome: others }, stations, signal),
  ]);
  return { rows: [...first.rows, ...rest.rows].slice(0, RANKED_LIMIT), total: first.total + rest.total };
}

export function rankedExchangesQueryOptions(rigId: number, captureId: number, stations: number[], order: ExchangeOrder) {
  return queryOptions({
    queryKey: exchangeKeys.ranked(rigId, captureId, stations, order),
    queryFn: ({ signal }) => fetchRankedExchanges(rigId, captureId, stations, order, signal),
  });
}

export function useRankedExchanges(rigId: number, captureId: number, stations: number[], order: ExchangeOrder, enabled = true) {
  return useQuery({ ...rankedExchangesQueryOptions(rigId, captureId, stations, order), enabled });
}
