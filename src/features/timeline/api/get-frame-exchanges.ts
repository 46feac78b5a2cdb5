import { useInfiniteQuery } from '@tanstack/react-query';
import { useEffect, useMemo } from 'react';
import type { ExchangePage, ExchangeRow } from '../../../../shared/schemas';
import { api } from '../../../lib/api';
import { timelineKeys } from './timeline-keys';
import { captureScope } from '../../../lib/scope';

const PAGE = 1000;
/**
 * The exchange list has no time filter, so pages are read from the start of the capture until
 * they pass the last timeline row loaded. Past this many the markers stop (the view says so).
 */
export const MAX_EXCHANGE_PAGES = 40;

/** A frame's part in an exchange, as the timeline marks it. */
export interface FrameExchange {
  exchangeId: number;
  role: 'request' | 'retry' | 'response';
  station: number;
  callName: string;
  rttSeconds: number | null;
  outcome: ExchangeRow['outcome'];
}

function callName(row: ExchangeRow): string {
  return row.call.name ?? (row.call.code === null ? 'call' : `call ${row.call.code}`);
}

/** frame id → its exchange, for every frame of the loaded exchanges */
export function frameExchangeMap(pages: readonly ExchangePage[]): Map<number, FrameExchange> {
  const map = new Map<number, FrameExchange>();
  for (const page of pages) {
    for (const row of page.rows) {
      const base = { exchangeId: row.id, station: row.station.address, callName: callName(row), rttSeconds: row.rttSeconds, outcome: row.outcome };
      if (row.requestFrameId !== null) map.set(row.requestFrameId, { ...base, role: 'request' });
      for (const id of row.retryFrameIds) map.set(id, { ...base, role: 'retry' });
      for (const id of row.responseFrameIds) map.set(id, { ...base, role: 'response' });
    }
  }
  return map;
}

function fetchExchangePage(rigId: number, captureId: number, stations: number[], cursor: string | null, signal: AbortSignal): Promise<ExchangePage> {
  const params = new URLSearchParams({ limit: String(PAGE), sort: 'time' });
  if (stations.length) params.set('station', stations.join(','));
  if (cursor) params.set('cursor', cursor);
  return api(`${captureScope(rigId, captureId).path}/exchanges?${params}`, { signal });
}

/**
 * Exchanges of the frames the timeline has loaded: pages in time order, read lazily until the last
 * one starts after `untilT`, turned into one memoised frame → exchange map (no request per row).
 */
export function useFrameExchanges(rigId: number, captureId: number, stations: number[], untilT: number) {
  const query = useInfiniteQuery({
    queryKey: [...timelineKeys.capture(rigId, captureId), 'exchanges', stations] as const,
    initialPageParam: null as string | null,
    queryFn: ({ pageParam, signal }) => fetchExchangePage(rigId, captureId, stations, pageParam, signal),
    getNextPageParam: (last) => last.nextCursor ?? undefined,
    // a re-run of the call layer changes exchange ids; half a minute keeps jumps and filter changes from rereading every page
    staleTime: 30_000,
  });
  const pages = query.data?.pages;
  const lastStart = pages?.at(-1)?.rows.at(-1)?.tRequest ?? null;
  const capped = (pages?.length ?? 0) >= MAX_EXCHANGE_PAGES && query.hasNextPage;
  const { hasNextPage, isFetching, fetchNextPage } = query;
  useEffect(() => {
    if (!pages || isFetching || !hasNextPage || capped) return;
    if (lastStart !== null && lastStart <= untilT) void fetchNextPage();
  }, [pages, isFetching, hasNextPage, capped, lastStart, untilT, fetchNextPage]);
  const map = useMemo(() => frameExchangeMap(pages ?? []), [pages]);
  return { map, capped, coveredUntil: lastStart, error: query.error };
}
