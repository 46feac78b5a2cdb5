import { queryOptions, useQuery } from '@tanstack/react-query';
import type { ExchangePage, ExchangeRow } from '../../../../shared/schemas';
import { api } from '../../../lib/api';
import { exchangeKeys, type ExchangeListQuery } from './exchange-keys';
import { captureScope } from '../../../lib/scope';

/** Enough to rank a long session; past it the view says how many it left out (the schedule draws them all). */
export const EXCHANGE_READ_LIMIT = 20_000;

export interface ExchangeList {
  rows: ExchangeRow[];
  total: number;
}

/** Every exchange matching the filters, in time order, following the cursor page by page. */
export async function fetchExchanges(rigId: number, captureId: number, query: ExchangeListQuery, signal?: AbortSignal): Promise<ExchangeList> {
  const rows: ExchangeRow[] = [];
  let cursor: string | null = null;
  let total: number;
  do {
    const params = new URLSearchParams({ limit: '1000', sort: 'time' });
    if (query.station?.length) params.set('station', query.station.join(','));
    if (query.file !== undefined) params.set('file', String(query.file));
    if (cursor) params.set('cursor', cursor);
    const page: ExchangePage = await api(`${captureScope(rigId, captureId).path}/exchanges?${params}`, { signal });
    rows.push(...page.rows);
    total = page.total;
    cursor = page.nextCursor;
  } while (cursor && rows.length < EXCHANGE_READ_LIMIT);
  return { rows, total };
}

export function exchangesQueryOptions(rigId: number, captureId: number, query: ExchangeListQuery) {
  return queryOptions({
    queryKey: exchangeKeys.list(rigId, captureId, query),
    queryFn: ({ signal }) => fetchExchanges(rigId, captureId, query, signal),
  });
}

export function useExchanges(rigId: number, captureId: number, query: ExchangeListQuery, enabled = true) {
  return useQuery({ ...exchangesQueryOptions(rigId, captureId, query), enabled });
}

/** The exchanges the filters select, as a file the server streams (time order, every row). */
export function exchangeExportUrl(rigId: number, captureId: number, query: ExchangeListQuery, format: 'csv' | 'json'): string {
  const params = new URLSearchParams();
  if (query.station?.length) params.set('station', query.station.join(','));
  if (query.file !== undefined) params.set('file', String(query.file));
  const q = params.toString();
  return `${captureScope(rigId, captureId).path}/exchanges/export.${format}${q ? `?${q}` : ''}`;
}
