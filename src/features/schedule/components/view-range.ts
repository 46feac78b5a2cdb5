// The schedule's visible time range: zoom about a point, pan by a fraction, clamp to the capture,
// and the window to fetch around it (one screen either side, so a pan draws from what is loaded).

export interface Range {
  from: number;
  to: number;
}

/** the narrowest range: a few bit times at the highest rates */
export const MIN_SPAN = 2e-6;

export function clampRange(r: Range, extent: Range): Range {
  const whole = Math.max(MIN_SPAN, extent.to - extent.from);
  const span = Math.min(whole, Math.max(MIN_SPAN, r.to - r.from));
  let from = r.from;
  if (from < extent.from) from = extent.from;
  if (from + span > extent.from + whole) from = extent.from + whole - span;
  return { from, to: from + span };
}

/** zoom by `factor` (<1 in) keeping the time under `at` (0..1 across) in place */
export function zoomRange(r: Range, factor: number, at: number, extent: Range): Range {
  const span = (r.to - r.from) * factor;
  const pivot = r.from + (r.to - r.from) * at;
  return clampRange({ from: pivot - span * at, to: pivot - span * at + span }, extent);
}

export function panRange(r: Range, fraction: number, extent: Range): Range {
  const d = (r.to - r.from) * fraction;
  return clampRange({ from: r.from + d, to: r.to + d }, extent);
}

/** a range centred on [a, b], `margin` of its length either side */
export function rangeAround(a: number, b: number, extent: Range, margin = 3): Range {
  const len = Math.max(MIN_SPAN * 4, b - a);
  return clampRange({ from: a - len * margin, to: b + len * margin }, extent);
}

export interface Fetched extends Range {
  width: number;
}

/** Whether the loaded window still serves the view: covers it, at about the same scale. */
export function covers(f: Fetched | null, view: Range, widthPx: number): boolean {
  if (!f) return false;
  const viewScale = (view.to - view.from) / widthPx;
  const fetchedScale = (f.to - f.from) / f.width;
  return view.from >= f.from && view.to <= f.to && fetchedScale <= viewScale * 1.5 && fetchedScale >= viewScale / 1.5;
}

/** The window to load for a view: one screen either side, three screens of pixels (rounded so pans reuse it). */
export function fetchFor(view: Range, widthPx: number, extent: Range): Fetched {
  const span = view.to - view.from;
  const from = Math.max(extent.from, view.from - span);
  const to = Math.min(Math.max(extent.to, from + span), view.to + span);
  const width = Math.min(8192, Math.max(16, Math.round((widthPx * (to - from)) / span)));
  return { from, to, width };
}

/** The range in the URL (`from`, `to` seconds), when it is one. */
export function parseRange(from: string | null, to: string | null): Range | null {
  const a = Number(from);
  const b = Number(to);
  return from !== null && to !== null && Number.isFinite(a) && Number.isFinite(b) && b > a ? { from: a, to: b } : null;
}
