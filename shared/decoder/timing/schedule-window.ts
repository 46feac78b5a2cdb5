// Level of detail for the schedule view: what to draw of a Schedule in a time window that is
// `width` pixels wide. A span at least `minSpanPx` wide is drawn by itself, with its pixel
// coordinates; narrower ones are counted in their pixel column by category, so a lane of 100 000
// exchanges seen whole is at most `width` columns of counts. The view only draws what it gets.
import { FRAME_STATUS_CODES, OUTCOME_CODES, WAIT_ENDS, type Schedule, type SkippedVisit } from './line-timing';
import { firstReaching, type SpanColumns } from './span-columns';

export interface ScheduleWindowOptions {
  /** seconds */
  from: number;
  to: number;
  /** pixels across the window */
  width: number;
  /** narrower spans are counted, not drawn (default 2 px) */
  minSpanPx?: number;
  /** more spans than this in one row and every span of the row is counted instead (default 4 × width) */
  maxItems?: number;
  /** only these stations' lanes (default all, in the schedule's order) */
  stations?: number[];
}

/** One span drawn by itself: its index in its row, the caller's id, pixel extent (clipped to the window) and category. */
export interface WindowItem {
  index: number;
  id: number;
  x0: number;
  x1: number;
  code: number;
}

/** Spans too narrow to draw: counts per pixel column (only columns with any), one count per category. */
export interface WindowColumn {
  x: number;
  counts: number[];
}

export interface WindowRow {
  items: WindowItem[];
  columns: WindowColumn[];
  /** spans in the window in all */
  total: number;
}

export interface LaneWindow {
  station: number;
  /** request line high periods, merged where closer than a pixel (never counted) */
  requestLine: { x0: number; x1: number }[];
  stationFrames: WindowRow;
  serverFrames: WindowRow;
  exchanges: WindowRow;
  waits: WindowRow;
}

export interface ScheduleWindow {
  from: number;
  to: number;
  width: number;
  /** seconds per pixel */
  secondsPerPx: number;
  /** names of the codes each row's items and counts use */
  codes: { frames: readonly string[]; exchanges: readonly string[]; waits: readonly string[]; visits: readonly number[] };
  /** the server's visits; code = lane (index into codes.visits, the stations in lane order) */
  visits: WindowRow;
  /** x of each round's start in the window */
  roundStarts: number[];
  skipped: (SkippedVisit & { x: number })[];
  lanes: LaneWindow[];
}

export const WAIT_CODES: readonly string[] = [...WAIT_ENDS, ...WAIT_ENDS.map((e) => `${e}, starved`)];

/** The drawable window of a schedule. */
export function scheduleWindow(s: Schedule, o: ScheduleWindowOptions): ScheduleWindow {
  if (!(o.to > o.from)) throw new RangeError(`a window needs to > from (from ${o.from}, to ${o.to})`);
  const width = Math.max(1, Math.floor(o.width));
  const scale = width / (o.to - o.from);
  const x = (t: number) => (t - o.from) * scale;
  const opts = { from: o.from, to: o.to, width, scale, minSpanPx: o.minSpanPx ?? 2, maxItems: o.maxItems ?? 4 * width };
  const chosen = o.stations ? s.lanes.filter((l) => o.stations!.includes(l.station)) : s.lanes;
  const clip = (v: number) => Math.max(0, Math.min(width, v));
  return {
    from: o.from,
    to: o.to,
    width,
    secondsPerPx: 1 / scale,
    codes: { frames: FRAME_STATUS_CODES, exchanges: OUTCOME_CODES, waits: WAIT_CODES, visits: s.stations },
    visits: windowRow(s.visits, opts, s.stations.length),
    roundStarts: Array.from(s.roundStarts.filter((t) => t >= o.from && t <= o.to), x),
    skipped: s.skipped.filter((k) => k.at >= o.from && k.at <= o.to).map((k) => ({ ...k, x: x(k.at) })),
    lanes: chosen.map((l) => ({
      station: l.station,
      requestLine: mergedPeriods(l.requestLine, opts).map(([a, b]) => ({ x0: clip(x(a)), x1: clip(x(b)) })),
      stationFrames: windowRow(l.stationFrames, opts, FRAME_STATUS_CODES.length),
      serverFrames: windowRow(l.serverFrames, opts, FRAME_STATUS_CODES.length),
      exchanges: windowRow(l.exchanges, opts, OUTCOME_CODES.length),
      waits: windowRow(l.waits, opts, WAIT_CODES.length),
    })),
  };
}

interface Opts {
  from: number;
  to: number;
  width: number;
  scale: number;
  minSpanPx: number;
  maxItems: number;
}

/** One row's spans in the window: wide ones as items, narrow ones counted per pixel column. */
export function windowRow(c: SpanColumns, o: Opts, codes: number): WindowRow {
  const items: WindowItem[] = [];
  const counts = new Map<number, number[]>();
  const count = (col: number, code: number) => {
    let k = counts.get(col);
    if (!k) counts.set(col, (k = new Array<number>(codes).fill(0)));
    k[Math.min(code, codes - 1)]++;
  };
  let total = 0;
  for (let i = firstReaching(c, o.from); i < c.n && c.start[i] <= o.to; i++) {
    if (c.end[i] < o.from) continue;
    total++;
    const x0 = (c.start[i] - o.from) * o.scale;
    const x1 = (c.end[i] - o.from) * o.scale;
    if (x1 - x0 >= o.minSpanPx && items.length < o.maxItems) {
      items.push({ index: i, id: c.id[i], x0: Math.max(0, x0), x1: Math.min(o.width, x1), code: c.code[i] });
    } else count(Math.min(o.width - 1, Math.max(0, Math.floor(x0))), c.code[i]);
  }
  if (items.length >= o.maxItems) {
    // too many to draw one by one at this zoom: count them all
    for (const it of items) count(Math.min(o.width - 1, Math.floor(it.x0)), it.code);
    items.length = 0;
  }
  const columns = [...counts].sort((a, b) => a[0] - b[0]).map(([x, k]) => ({ x, counts: k }));
  return { items, columns, total };
}

/** High periods in the window, merged where the gap between them is under a pixel. */
function mergedPeriods(c: SpanColumns, o: Opts): [number, number][] {
  const out: [number, number][] = [];
  const px = 1 / o.scale;
  for (let i = firstReaching(c, o.from); i < c.n && c.start[i] <= o.to; i++) {
    if (c.end[i] < o.from) continue;
    const last = out[out.length - 1];
    if (last && c.start[i] - last[1] < px) last[1] = Math.max(last[1], c.end[i]);
    else out.push([c.start[i], c.end[i]]);
  }
  return out;
}
