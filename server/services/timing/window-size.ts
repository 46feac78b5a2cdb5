// A schedule window as sent: the level of detail bounds its rows by width, but round starts come one
// per round (25 000 on a long capture seen whole, half of the answer) and every x with a double's
// seventeen digits. The canvas draws at whole pixels, re-scaled by at most 1.5× before it asks again,
// so a hundredth of a pixel, and one round tick per pixel, lose nothing it can show.
import type { ScheduleWindow, WindowRow } from '../../../shared/decoder/timing';

const px = (x: number) => Math.round(x * 100) / 100;

/** round starts closer than this to the last one kept are dropped (the tick is drawn over it anyway) */
const MIN_TICK_GAP_PX = 1;

export function thinRoundStarts(xs: readonly number[]): number[] {
  const out: number[] = [];
  let last = -Infinity;
  for (const x of xs) {
    if (x - last < MIN_TICK_GAP_PX) continue;
    out.push(px(x));
    last = x;
  }
  return out;
}

function rowOf(r: WindowRow): WindowRow {
  return { ...r, items: r.items.map((it) => ({ ...it, x0: px(it.x0), x1: px(it.x1) })) };
}

export function compactWindow(w: ScheduleWindow): ScheduleWindow {
  return {
    ...w,
    visits: rowOf(w.visits),
    roundStarts: thinRoundStarts(w.roundStarts),
    skipped: w.skipped.map((k) => ({ ...k, x: px(k.x) })),
    lanes: w.lanes.map((l) => ({
      ...l,
      requestLine: l.requestLine.map((p) => ({ x0: px(p.x0), x1: px(p.x1) })),
      stationFrames: rowOf(l.stationFrames),
      serverFrames: rowOf(l.serverFrames),
      exchanges: rowOf(l.exchanges),
      waits: rowOf(l.waits),
    })),
  };
}
