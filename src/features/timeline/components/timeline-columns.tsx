import { createColumnHelper } from '@tanstack/react-table';
import type { TimelineCallMarker, TimelineFrame, TimelineRow } from '../../../../shared/schemas';
import { StatusChip } from '../../../components/status-chip';
import { formatDelta, formatSeconds } from '../../../components/units';
import { formatAddress } from '../../../lib/format';
import { CallMarker } from './call-marker';

export interface TimelineMeta {
  /** every loaded row; the table holds a block of them starting at `offset` */
  rows: TimelineRow[];
  offset: number;
  selectedT: number | null;
  linkLabels: Record<string, string>;
  /** frame id → its exchange (call layer), for the loaded exchanges */
  callHref?: (e: TimelineCallMarker) => string;
}

const col = createColumnHelper<TimelineRow>();
const frameOnly = <T,>(fn: (f: TimelineFrame) => T) => (row: TimelineRow) => (row.type === 'frame' ? fn(row) : null);

/**
 * Column widths; the summary takes what is left (the timeline page is wider than the others for it).
 * Shared by header and rows so they line up.
 */
export const columnWidths: Record<string, string> = {
  time: '6rem',
  gap: '6rem',
  fromSelected: '7rem',
  link: '5.5rem',
  station: '8rem',
  kind: '4.6rem',
  seq: '6rem',
  length: '3.2rem',
  status: '6.6rem',
  summary: 'minmax(8rem,1fr)',
};

export const timelineColumns = [
  col.accessor('t', {
    id: 'time',
    header: 'Time (s)',
    cell: (c) => <span className="tabular-nums">{formatSeconds(c.getValue())}</span>,
  }),
  col.display({
    id: 'gap',
    header: () => <span title="Time since the row above">Gap</span>,
    cell: (c) => {
      const meta = c.table.options.meta as TimelineMeta;
      const prev = meta.rows[meta.offset + c.row.index - 1];
      return prev ? <span className="tabular-nums text-muted">{formatDelta(c.row.original.t - prev.t)}</span> : null;
    },
  }),
  col.display({
    id: 'fromSelected',
    header: () => <span title="Time of the row counted from the selected frame (negative: before it)">Since selected</span>,
    cell: (c) => {
      const meta = c.table.options.meta as TimelineMeta;
      return meta.selectedT === null ? null : <span className="tabular-nums text-muted">{formatDelta(c.row.original.t - meta.selectedT)}</span>;
    },
  }),
  col.accessor('link', {
    id: 'link',
    header: 'Link',
    cell: (c) => {
      const meta = c.table.options.meta as TimelineMeta;
      const link = c.getValue();
      return link ? <span title={meta.linkLabels[link] || link}>{link}</span> : null;
    },
  }),
  col.accessor(frameOnly((f) => (f.address === null ? null : (f.stationName ?? formatAddress(f.address)))), {
    id: 'station',
    header: 'Station',
    cell: (c) => c.getValue(),
  }),
  col.accessor(frameOnly((f) => [f.kind, f.command !== f.kind ? f.command : null].filter(Boolean).join(' ')), {
    id: 'kind',
    header: 'Kind',
    cell: (c) => <span className="font-medium">{c.getValue()}</span>,
  }),
  col.accessor(frameOnly((f) => f), {
    id: 'seq',
    header: 'N(S) N(R) P/F',
    cell: (c) => {
      const f = c.getValue();
      if (!f) return null;
      const part = (v: number | null) => (v === null ? '·' : String(v));
      return (
        <span className="tabular-nums">
          {part(f.ns)} {part(f.nr)} {f.pf === null ? '·' : f.pf ? 'P' : '–'}
        </span>
      );
    },
  }),
  col.accessor(frameOnly((f) => f.infoLength), {
    id: 'length',
    header: 'Len',
    cell: (c) => <span className="tabular-nums">{c.getValue()}</span>,
  }),
  col.accessor(frameOnly((f) => f.status), {
    id: 'status',
    header: 'Status',
    cell: (c) => {
      const s = c.getValue();
      const row = c.row.original;
      const notes = row.type === 'frame' ? (row.notes ?? 0) : 0;
      return s ? (
        <>
          <StatusChip status={s} />
          {notes > 0 ? (
            <span className="ml-1 rounded-sm bg-tide-500/15 px-1 text-xs text-tide-700 dark:text-tide-300" title={`${notes} ${notes === 1 ? 'note' : 'notes'} on this frame`} data-testid="note-marker">
              ✎{notes}
            </span>
          ) : null}
        </>
      ) : null;
    },
  }),
  col.accessor('summary', {
    id: 'summary',
    header: 'Summary',
    cell: (c) => {
      // a frame's part in an exchange leads its summary (a column of its own would push the summary off narrow screens)
      const meta = c.table.options.meta as TimelineMeta;
      const row = c.row.original;
      const e = row.type === 'frame' ? row.call : undefined;
      // the cell is as wide as the page allows; what does not fit ends in an ellipsis and is whole on hover and in the inspector
      return (
        <>
          {e && meta.callHref ? <CallMarker exchange={e} href={meta.callHref(e)} /> : null}
          <span className="min-w-0 truncate" title={c.getValue()} data-testid="row-summary">
            {c.getValue()}
          </span>
        </>
      );
    },
  }),
];

export const gridTemplate = timelineColumns.map((c) => columnWidths[c.id!]).join(' ');
