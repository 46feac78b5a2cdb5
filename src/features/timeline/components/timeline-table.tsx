import { flexRender, getCoreRowModel, useReactTable } from '@tanstack/react-table';
import { useVirtualizer } from '@tanstack/react-virtual';
import { useCallback, useEffect, useLayoutEffect, useMemo, useRef, type KeyboardEvent } from 'react';
import type { TimelineCallMarker, TimelineFrame, TimelineRow } from '../../../../shared/schemas';
import { ErrorNotice } from '../../../components/notice';
import { useTimelineRows } from '../api/get-timeline';
import type { TimelineFilters } from '../api/timeline-filters';
import { gridTemplate, timelineColumns, type TimelineMeta } from './timeline-columns';
import { captureScope } from '../../../lib/scope';

export const ROW_HEIGHT = 30;
/** rows from either end of what is loaded at which the next page is asked for */
const PREFETCH_ROWS = 400;
/** the table's row model is built for whole blocks of this many rows around the view */
const ROW_BLOCK = 128;

const rowKey = (r: TimelineRow) => `${r.type}-${r.id}`;
// stable across renders: a new function makes the virtualizer re-measure every row on each scroll step
const rowSize = () => ROW_HEIGHT;

interface Props {
  rigId: number;
  captureId: number;
  filters: TimelineFilters;
  start: string | null;
  selectedId: number | null;
  /** a frame to bring into view once it is loaded */
  revealId: number | null;
  linkLabels: Record<string, string>;
  onSelect: (frame: TimelineFrame) => void;
  onOpen: (frame: TimelineFrame) => void;
  onAnchor: (t: number) => void;
  onDamaged: (dir: 'next' | 'prev') => void;
  /** take the keyboard focus when mounted (the list was remounted by a jump the keys asked for) */
  focusOnMount?: boolean;
}

/** The virtualised frame list: only the rows in view are in the DOM; pages load as the user nears either end. */
export function TimelineTable({ rigId, captureId, filters, start, selectedId, revealId, linkLabels, onSelect, onOpen, onAnchor, onDamaged, focusOnMount = false }: Props) {
  const query = useTimelineRows(rigId, captureId, filters, start, true);
  const rows = useMemo(() => query.data?.pages.flatMap((p) => p.rows) ?? [], [query.data]);
  const scrollRef = useRef<HTMLDivElement>(null);
  const anchor = useRef<{ key: string; index: number; delta: number } | null>(null);
  const selectedT = useMemo(() => rows.find((r) => r.type === 'frame' && r.id === selectedId)?.t ?? null, [rows, selectedId]);
  const callHref = useCallback(
    (e: TimelineCallMarker) => `${captureScope(rigId, captureId).page}/schedule?${new URLSearchParams({ station: String(e.station), ex: String(e.exchangeId) })}`,
    [rigId, captureId],
  );

  const virtualizer = useVirtualizer({
    count: rows.length,
    getScrollElement: () => scrollRef.current,
    estimateSize: rowSize,
    overscan: 8,
  });
  const items = virtualizer.getVirtualItems();
  const firstIndex = items[0]?.index ?? 0;
  const lastIndex = items[items.length - 1]?.index ?? 0;

  // The table's row model holds the block of rows around the view, not every loaded row: building
  // a row for each of a few thousand loaded rows took tens of milliseconds on each page that came in.
  const blockStart = Math.floor(firstIndex / ROW_BLOCK) * ROW_BLOCK;
  const blockEnd = Math.min(rows.length, (Math.floor(lastIndex / ROW_BLOCK) + 1) * ROW_BLOCK);
  const block = useMemo(() => rows.slice(blockStart, blockEnd), [rows, blockStart, blockEnd]);
  const table = useReactTable<TimelineRow>({
    data: block,
    columns: timelineColumns,
    getCoreRowModel: getCoreRowModel(),
    getRowId: rowKey,
    meta: { rows, offset: blockStart, selectedT, linkLabels, callHref } satisfies TimelineMeta,
  });
  const tableRows = table.getRowModel().rows;
  // the rows actually in view (the virtual items include overscan rows above and below)
  const offset = virtualizer.scrollOffset ?? 0;
  const viewTop = Math.min(rows.length - 1, Math.floor(offset / ROW_HEIGHT));
  const viewBottom = Math.min(rows.length - 1, Math.floor((offset + (virtualizer.scrollRect?.height ?? 0) - 1) / ROW_HEIGHT));

  // Keep the row at the top in place when pages are added before it or dropped from the far end.
  useLayoutEffect(() => {
    const el = scrollRef.current;
    // until the user scrolls, the first row loaded (the start cursor's row) is the one to keep in place
    if (!anchor.current && rows.length > 0) anchor.current = { key: rowKey(rows[0]), index: 0, delta: 0 };
    const a = anchor.current;
    if (!el || !a) return;
    const index = rows.findIndex((r) => rowKey(r) === a.key);
    if (index >= 0 && index !== a.index) {
      el.scrollTop = index * ROW_HEIGHT + a.delta;
      anchor.current = { ...a, index };
    }
  }, [rows]);

  useEffect(() => {
    if (!query.isSuccess || query.isFetching) return;
    // nothing at or after the start time: show what comes before it
    if (rows.length === 0) {
      if (query.hasPreviousPage) void query.fetchPreviousPage();
      return;
    }
    if (lastIndex >= rows.length - PREFETCH_ROWS && query.hasNextPage) void query.fetchNextPage();
    else if (firstIndex <= PREFETCH_ROWS && query.hasPreviousPage) void query.fetchPreviousPage();
  }, [firstIndex, lastIndex, rows.length, query]);

  useEffect(() => {
    if (revealId === null) return;
    const index = rows.findIndex((r) => r.type === 'frame' && r.id === revealId);
    if (index >= 0) virtualizer.scrollToIndex(index, { align: 'center' });
  }, [revealId, rows, virtualizer]);

  useEffect(() => {
    if (focusOnMount) scrollRef.current?.focus({ preventScroll: true });
    // only when mounted: a later change of the flag belongs to the next list
    // eslint-disable-next-line react-hooks/exhaustive-deps
  }, []);

  const anchorTimer = useRef<number | undefined>(undefined);
  useEffect(() => () => window.clearTimeout(anchorTimer.current), []);
  function onScroll() {
    const el = scrollRef.current;
    if (!el || rows.length === 0) return;
    const index = Math.min(rows.length - 1, Math.floor(el.scrollTop / ROW_HEIGHT));
    anchor.current = { key: rowKey(rows[index]), index, delta: el.scrollTop - index * ROW_HEIGHT };
    window.clearTimeout(anchorTimer.current);
    const t = rows[index].t;
    anchorTimer.current = window.setTimeout(() => onAnchor(t), 300);
  }

  function move(step: 1 | -1) {
    let index = rows.findIndex((r) => r.type === 'frame' && r.id === selectedId);
    if (index < 0) index = step > 0 ? firstIndex - 1 : lastIndex + 1;
    for (let i = index + step; i >= 0 && i < rows.length; i += step) {
      const r = rows[i];
      if (r.type === 'frame') {
        onSelect(r);
        virtualizer.scrollToIndex(i, { align: 'auto' });
        return;
      }
    }
  }

  function keyDown(event: KeyboardEvent<HTMLDivElement>) {
    if (event.altKey || event.ctrlKey || event.metaKey) return;
    const selected = rows.find((r): r is TimelineFrame => r.type === 'frame' && r.id === selectedId);
    if (event.key === 'ArrowDown') move(1);
    else if (event.key === 'ArrowUp') move(-1);
    else if (event.key === 'Enter' && selected) onOpen(selected);
    else if (event.key === 'n') onDamaged('next');
    else if (event.key === 'p') onDamaged('prev');
    else return;
    event.preventDefault();
  }

  return (
    <div className="overflow-hidden rounded-lg border border-line bg-surface shadow-sm">
      <div role="row" className="grid border-b border-line bg-raised px-2 text-xs font-medium uppercase tracking-wide text-muted" style={{ gridTemplateColumns: gridTemplate }}>
        {table.getHeaderGroups()[0].headers.map((h) => (
          <div key={h.id} role="columnheader" className="truncate px-1.5 py-2">
            {flexRender(h.column.columnDef.header, h.getContext())}
          </div>
        ))}
      </div>
      <div
        ref={scrollRef}
        onScroll={onScroll}
        onKeyDown={keyDown}
        tabIndex={0}
        role="grid"
        aria-label="Frames and line events"
        aria-rowcount={rows.length}
        data-testid="timeline-scroller"
        // the list keeps its own anchor row when pages come and go; the browser's anchoring would add to it
        style={{ overflowAnchor: 'none' }}
        className="relative h-[calc(100vh-19rem)] min-h-80 overflow-auto font-mono text-[12.5px] focus:outline-none focus-visible:ring-2 focus-visible:ring-focus/60"
      >
        {query.isPending ? <p className="p-4 font-sans text-sm text-muted">Loading frames…</p> : null}
        {query.error ? (
          <div className="p-4 font-sans">
            <ErrorNotice error={query.error} />
          </div>
        ) : null}
        {query.isSuccess && rows.length === 0 && !query.hasPreviousPage ? <p className="p-4 font-sans text-sm text-muted">No frames match these filters.</p> : null}
        {/* containment keeps each scroll step's style and layout work to the rows in view */}
        <div style={{ height: virtualizer.getTotalSize(), position: 'relative', contain: 'strict', width: '100%' }}>
          {items.map((item) => {
            const row = tableRows[item.index - blockStart];
            const data = row.original;
            const selected = data.type === 'frame' && data.id === selectedId;
            if (data.type === 'event') {
              return (
                <div
                  key={row.id}
                  role="row"
                  aria-rowindex={item.index + 1}
                  className="absolute left-0 flex w-full items-center gap-3 border-b border-line/40 bg-raised/40 px-3.5 text-[11.5px] italic text-muted"
                  style={{ height: ROW_HEIGHT, transform: `translateY(${item.start}px)`, contain: 'strict' }}
                >
                  <span className="w-[5.6rem] not-italic tabular-nums">{data.t.toFixed(6)}</span>
                  <span aria-hidden>┄</span>
                  <span className="truncate">Line event · {data.summary}</span>
                </div>
              );
            }
            return (
              <div
                key={row.id}
                role="row"
                aria-rowindex={item.index + 1}
                aria-selected={selected}
                data-frame-id={data.id}
                onClick={() => onSelect(data)}
                onDoubleClick={() => onOpen(data)}
                className={`absolute left-0 grid w-full cursor-default items-center border-b border-line/50 px-2 ${
                  selected ? 'bg-flare-500/15 shadow-[inset_3px_0_0_var(--color-flare-500)]' : data.status !== 'ok' ? 'bg-[#e0582f]/5 hover:bg-raised' : 'hover:bg-raised'
                }`}
                style={{ height: ROW_HEIGHT, transform: `translateY(${item.start}px)`, gridTemplateColumns: gridTemplate, contain: 'strict' }}
              >
                {row.getVisibleCells().map((cell) => (
                  <div key={cell.id} role="gridcell" className="flex min-w-0 items-center overflow-hidden whitespace-nowrap px-1.5">
                    {flexRender(cell.column.columnDef.cell, cell.getContext())}
                  </div>
                ))}
              </div>
            );
          })}
        </div>
      </div>
      <div className="flex justify-between border-t border-line bg-raised px-3 py-1 font-mono text-[11px] text-muted" aria-live="polite">
        <span data-testid="loaded-range">
          {rows.length > 0 ? `showing ${rows[Math.max(0, viewTop)]?.t.toFixed(6)} s – ${rows[Math.max(0, viewBottom)]?.t.toFixed(6)} s` : ''}
        </span>
        <span>{query.isFetchingNextPage || query.isFetchingPreviousPage ? 'loading more…' : `${rows.length.toLocaleString('en-GB')} rows in memory`}</span>
      </div>
    </div>
  );
}
