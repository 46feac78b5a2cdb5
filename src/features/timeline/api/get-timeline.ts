import { infiniteQueryOptions, keepPreviousData, queryOptions, useInfiniteQuery, useQuery } from '@tanstack/react-query';
import type { TimelinePage, TimelineQuery, TimelineRow } from '../../../../shared/schemas';
import { api } from '../../../lib/api';
import { filterSearch, type TimelineFilters } from './timeline-filters';
import { timelineKeys } from './timeline-keys';
import { captureScope } from '../../../lib/scope';

export const PAGE_ROWS = 1000;
/** the first page only fills the window and a little more, so the list paints at once; later pages are full */
export const FIRST_PAGE_ROWS = 200;
/** pages kept in memory; older ones are dropped as the user scrolls on, and fetched again on the way back */
export const MAX_PAGES = 8;

interface PageParam {
  cursor: string | null;
  direction: TimelineQuery['direction'];
  /** rows to ask for (PAGE_ROWS unless said) */
  limit?: number;
}

export interface LoadedPage extends TimelinePage {
  direction: TimelineQuery['direction'];
}

export async function fetchTimelinePage(
  rigId: number,
  captureId: number,
  filters: TimelineFilters,
  param: PageParam,
  signal?: AbortSignal,
): Promise<LoadedPage> {
  const q = filterSearch(filters);
  q.set('limit', String(param.limit ?? PAGE_ROWS));
  q.set('direction', param.direction);
  if (param.cursor) q.set('cursor', param.cursor);
  const page = await api<TimelinePage>(`${captureScope(rigId, captureId).path}/timeline?${q}`, { signal });
  // rows are shown in time order whichever way the page was read
  const rows = isDescending(page.rows) ? [...page.rows].reverse() : page.rows;
  return { ...page, rows, direction: param.direction };
}

function isDescending(rows: TimelineRow[]): boolean {
  if (rows.length < 2) return false;
  const a = rows[0];
  const b = rows[rows.length - 1];
  return a.t > b.t || (a.t === b.t && a.id > b.id && a.type === b.type);
}

/**
 * Pages in both directions from a start cursor (null = the beginning). A page read forward
 * continues forward with nextCursor and back with prevCursor; a page read backward the other way round.
 * The route's loader prefetches the first page with the same options.
 */
export function timelineRowsQueryOptions(rigId: number, captureId: number, filters: TimelineFilters, start: string | null) {
  return infiniteQueryOptions({
    queryKey: timelineKeys.rows(rigId, captureId, filters, start),
    initialPageParam: { cursor: start, direction: 'forward', limit: FIRST_PAGE_ROWS } as PageParam,
    queryFn: ({ pageParam, signal }) => fetchTimelinePage(rigId, captureId, filters, pageParam, signal),
    getNextPageParam: (last): PageParam | undefined => {
      const cursor = last.direction === 'forward' ? last.nextCursor : last.prevCursor;
      return cursor ? { cursor, direction: 'forward' } : undefined;
    },
    getPreviousPageParam: (first): PageParam | undefined => {
      const cursor = first.direction === 'forward' ? first.prevCursor : first.nextCursor;
      return cursor ? { cursor, direction: 'backward' } : undefined;
    },
    maxPages: MAX_PAGES,
    staleTime: Infinity,
  });
}

export function useTimelineRows(rigId: number, captureId: number, filters: TimelineFilters, start: string | null, enabled: boolean) {
  return useInfiniteQuery({ ...timelineRowsQueryOptions(rigId, captureId, filters, start), enabled });
}

export function fetchTimelineCount(rigId: number, captureId: number, filters: TimelineFilters): Promise<{ count: number }> {
  return api(`${captureScope(rigId, captureId).path}/timeline/count?${filterSearch(filters)}`);
}

export function timelineCountQueryOptions(rigId: number, captureId: number, filters: TimelineFilters) {
  return queryOptions({ queryKey: timelineKeys.count(rigId, captureId, filters), queryFn: () => fetchTimelineCount(rigId, captureId, filters) });
}

export function useTimelineCount(rigId: number, captureId: number, filters: TimelineFilters) {
  return useQuery({ ...timelineCountQueryOptions(rigId, captureId, filters), placeholderData: keepPreviousData });
}

export function fetchCursorAt(rigId: number, captureId: number, filters: TimelineFilters, t: number): Promise<{ cursor: string | null }> {
  const q = filterSearch(filters);
  q.set('t', String(t));
  return api(`${captureScope(rigId, captureId).path}/timeline/at?${q}`);
}

export function cursorAtQueryOptions(rigId: number, captureId: number, filters: TimelineFilters, t: number) {
  return queryOptions({
    queryKey: timelineKeys.at(rigId, captureId, filters, t),
    queryFn: () => fetchCursorAt(rigId, captureId, filters, t),
    staleTime: Infinity,
  });
}

/** The cursor of the first row at or after t, so a link with a time opens the view there. */
export function useCursorAt(rigId: number, captureId: number, filters: TimelineFilters, t: number | null) {
  return useQuery({ ...cursorAtQueryOptions(rigId, captureId, filters, t ?? 0), enabled: t !== null && t > 0 });
}

/** The frames the filters select, as a file (the server streams it; time order, no paging). */
export function timelineExportUrl(rigId: number, captureId: number, filters: TimelineFilters, format: 'csv' | 'json'): string {
  const q = filterSearch(filters).toString();
  return `${captureScope(rigId, captureId).path}/export.${format}${q ? `?${q}` : ''}`;
}
