// The width of the schedule's drawing area, known before the view renders: the route loader asks for
// the first window at this width, beside the service statistics, rather than after the first paint
// has measured the canvas. A guess off by less than 1.5× is still drawn from (the canvas re-scales
// the window), so the guess need not be exact.

/** the lane labels left of the canvas */
export const LABEL_W = 150;
/** what the page takes across around the canvas: the main column's padding and the card's padding and border (measured: 1440 px window, main 1080 px, canvas 861 px) */
const AROUND_PX = 69;

let measured: number | null = null;

/** The drawing area's width: as last measured in this page, else worked out from the main column. */
export function scheduleAreaWidth(): number {
  if (measured !== null) return measured;
  const main = typeof document === 'undefined' ? null : document.querySelector('main');
  const across = main?.clientWidth || (typeof window === 'undefined' ? 1024 : window.innerWidth);
  return Math.max(200, Math.floor(across - AROUND_PX - LABEL_W));
}

/** The view measured its area: the next visit starts from this width. */
export function noteAreaWidth(px: number): number {
  measured = Math.max(200, Math.floor(px));
  return measured;
}
