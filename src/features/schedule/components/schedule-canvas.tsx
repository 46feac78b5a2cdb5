import { useCallback, useEffect, useRef } from 'react';
import type { ScheduleWindow, WindowRow } from '../../../../shared/decoder/timing';
import { frameColours, laneColour, outcomeColours, requestLineColour, serverFrameColour, waitColours } from './schedule-palette';
import type { Range } from './view-range';

// The schedule drawn on a canvas: a time axis, the server's visits (one colour per station, round
// starts as ticks, passed-over stations as marks), then one lane per station with its request line,
// waits, its frames, the server's frames to it and its exchanges. The window may be for another
// range or scale than the view (the next one is loading): every x is mapped through time.

export const AXIS_H = 22;
export const VISITS_H = 34;
export const LANE_H = 66;
/** rows inside a lane: [top, height] */
const ROW = { line: [2, 6], wait: [10, 4], station: [17, 11], server: [30, 11], exchange: [45, 16] } as const;

export interface CanvasProps {
  win: ScheduleWindow;
  view: Range;
  /** css pixels across: the view measures its area (one measurement, so the first window is drawn once) */
  width: number;
  height: number;
  selectedId: number | null;
  onPan: (fraction: number) => void;
  onZoom: (factor: number, at: number) => void;
  onSelect: (exchangeId: number, station: number) => void;
  /** a column of counted spans was clicked: zoom in there */
  onZoomTo: (range: Range) => void;
  /** each drawing's duration in ms (the bench reads these) */
  onDrawn?: (ms: number) => void;
}

const EXCHANGE_ORDER = [2, 1, 0]; // unanswered, retried, answered: the rarer outcome colours a shared column
const FRAME_ORDER = [1, 2, 3, 4, 0];
const OUTCOMES = ['answered', 'retried', 'unanswered'];
const STATUSES = ['ok', 'bad-fcs', 'abort', 'short', 'residue'];

const rgbCache = new Map<string, [number, number, number]>();

/** a palette colour as red, green, blue (the palette writes #rrggbb; anything else goes through a canvas, once) */
function rgbOf(colour: string): [number, number, number] {
  let rgb = rgbCache.get(colour);
  if (rgb) return rgb;
  let hex = /^#([0-9a-f]{6})$/i.exec(colour)?.[1];
  if (!hex) {
    const g = document.createElement('canvas').getContext('2d');
    if (g) g.fillStyle = colour;
    hex = /^#([0-9a-f]{6})$/i.exec(String(g?.fillStyle ?? ''))?.[1] ?? '808080';
  }
  rgb = [parseInt(hex.slice(0, 2), 16), parseInt(hex.slice(2, 4), 16), parseInt(hex.slice(4, 6), 16)];
  rgbCache.set(colour, rgb);
  return rgb;
}

function niceStep(span: number, px: number): number {
  const raw = (span / px) * 110;
  const p = 10 ** Math.floor(Math.log10(raw));
  for (const m of [1, 2, 5, 10]) if (m * p >= raw) return m * p;
  return 10 * p;
}

export function formatTick(t: number, step: number): string {
  if (step >= 1) return `${t.toFixed(0)} s`;
  if (step >= 1e-3) return `${(t * 1e3).toFixed(step >= 1e-2 ? 0 : 1)} ms`;
  return `${(t * 1e3).toFixed(Math.min(6, Math.max(2, Math.ceil(-Math.log10(step * 1e3)))))} ms`;
}

export function ScheduleCanvas({ win, view, width, height, selectedId, onPan, onZoom, onSelect, onZoomTo, onDrawn }: CanvasProps) {
  const wrap = useRef<HTMLDivElement>(null);
  const canvas = useRef<HTMLCanvasElement>(null);
  const drag = useRef<{ x: number; moved: boolean } | null>(null);
  const theme = useRef<{ text: string; muted: string; line: string } | null>(null);
  /** the counted columns' pixels, kept between drawings (a pan draws every frame) */
  const pixels = useRef<ImageData | null>(null);

  // data pixel → view pixel
  const mapX = useCallback((x: number) => (win.from + x * win.secondsPerPx - view.from) * (width / (view.to - view.from)), [win, view, width]);

  useEffect(() => {
    const c = canvas.current;
    if (!c) return;
    const started = performance.now();
    const dpr = window.devicePixelRatio || 1;
    if (c.width !== Math.round(width * dpr) || c.height !== Math.round(height * dpr)) {
      c.width = Math.round(width * dpr);
      c.height = Math.round(height * dpr);
    }
    const g = c.getContext('2d');
    if (!g) return;
    g.setTransform(dpr, 0, 0, dpr, 0, 0);
    g.clearRect(0, 0, width, height);
    if (!theme.current) {
      const styles = getComputedStyle(c);
      theme.current = {
        text: styles.getPropertyValue('--fl-text').trim() || '#222',
        muted: styles.getPropertyValue('--fl-muted').trim() || '#777',
        line: styles.getPropertyValue('--fl-line').trim() || '#ccc',
      };
    }
    const { text, muted, line } = theme.current;
    const scale = width / (view.to - view.from);

    const bar = (x0: number, x1: number, y: number, h: number) => {
      const a = mapX(x0);
      const b = mapX(x1);
      if (b < -1 || a > width + 1) return;
      g.fillRect(a, y, Math.max(1, b - a), h);
    };
    // only what falls in the view is drawn (the window holds a screen either side for panning)
    const lo = (view.from - win.from) / win.secondsPerPx - 1;
    const hi = (view.to - win.from) / win.secondsPerPx + 1;
    type RowSpec = [r: WindowRow, y: number, h: number, colour: (code: number) => string, order: number[]];
    const vy = AXIS_H;
    const visitsRow: RowSpec = [win.visits, vy + 12, 14, (code) => laneColour(code), win.codes.visits.map((_, i) => i)];
    const laneRows = win.lanes.map((lane, i): RowSpec[] => {
      const y = AXIS_H + VISITS_H + i * LANE_H;
      return [
        [lane.waits, y + ROW.wait[0], ROW.wait[1], (code) => (code >= 3 ? waitColours.starved : code === 0 ? waitColours.served : waitColours.withdrawn), [3, 4, 5, 0, 1, 2]],
        [lane.stationFrames, y + ROW.station[0], ROW.station[1], (code) => frameColours[STATUSES[code] ?? 'ok'], FRAME_ORDER],
        [lane.serverFrames, y + ROW.server[0], ROW.server[1], (code) => (code === 0 ? serverFrameColour : frameColours[STATUSES[code] ?? 'ok']), FRAME_ORDER],
        [lane.exchanges, y + ROW.exchange[0], ROW.exchange[1], (code) => outcomeColours[OUTCOMES[code] ?? 'answered'], EXCHANGE_ORDER],
      ];
    });

    // Counted columns first, written as pixels: a long capture seen whole has a column in every
    // pixel of every row (some 15 000 rectangles), which the canvas fills far slower than this loop
    // sets them. Everything else is drawn over them.
    // A window with no counted columns (a short capture, or one zoomed in) skips the image: a
    // canvas-sized one costs milliseconds to clear and put even when empty.
    const counted = visitsRow[0].columns.length > 0 || laneRows.some((rows) => rows.some(([r]) => r.columns.length > 0));
    let img = pixels.current;
    if (counted) {
      if (!img || img.width !== c.width || img.height !== c.height) img = pixels.current = g.createImageData(c.width, c.height);
      else img.data.fill(0);
    }
    const px = img?.data ?? new Uint8ClampedArray(0);
    const W = c.width;
    const columns = ([r, y, h, colour, order]: RowSpec) => {
      const cols = r.columns;
      let a = 0;
      let b = cols.length;
      while (a < b) {
        const m = (a + b) >> 1;
        if (cols[m].x < lo) a = m + 1;
        else b = m;
      }
      const y0 = Math.round(y * dpr);
      const y1 = Math.round((y + h) * dpr);
      for (let k = a; k < cols.length && cols[k].x <= hi; k++) {
        const col = cols[k];
        let code = -1;
        let n = 0;
        for (const o of order) if (col.counts[o] > 0 && code < 0) code = o;
        for (const o of col.counts) n += o;
        const [R, G, B] = rgbOf(colour(code));
        const A = Math.round(Math.min(1, 0.35 + Math.log2(1 + n) / 6) * 255);
        const x0 = Math.max(0, Math.floor(mapX(col.x) * dpr));
        const x1 = Math.min(W, Math.max(x0 + 1, Math.floor(mapX(col.x + 1) * dpr)));
        for (let yy = y0; yy < y1; yy++) {
          for (let o = (yy * W + x0) * 4, end = (yy * W + x1) * 4; o < end; o += 4) {
            px[o] = R;
            px[o + 1] = G;
            px[o + 2] = B;
            px[o + 3] = A;
          }
        }
      }
    };
    if (counted && img) {
      columns(visitsRow);
      for (const rows of laneRows) rows.forEach(columns);
      g.putImageData(img, 0, 0);
    }

    // time axis
    const step = niceStep(view.to - view.from, width);
    g.font = '10px "IBM Plex Mono", monospace';
    g.fillStyle = muted;
    g.strokeStyle = line;
    g.lineWidth = 1;
    for (let t = Math.ceil(view.from / step) * step; t <= view.to; t += step) {
      const x = Math.round((t - view.from) * scale) + 0.5;
      g.beginPath();
      g.moveTo(x, AXIS_H - 6);
      g.lineTo(x, height);
      g.globalAlpha = 0.35;
      g.stroke();
      g.globalAlpha = 1;
      g.fillText(formatTick(t, step), x + 3, 11);
    }


    const items = ([r, y, h, colour]: RowSpec) => {
      let last = '';
      for (const it of r.items) {
        if (it.x1 < lo) continue;
        if (it.x0 > hi) break;
        const fill = colour(it.code);
        if (fill !== last) g.fillStyle = last = fill;
        bar(it.x0, it.x1, y, h);
      }
    };

    // the server's visits
    items(visitsRow);
    // round ticks in one path: a long capture seen whole has one per pixel
    g.strokeStyle = text;
    g.beginPath();
    for (const x of win.roundStarts) {
      if (x < lo) continue;
      if (x > hi) break;
      const px = Math.round(mapX(x)) + 0.5;
      g.moveTo(px, vy + 10);
      g.lineTo(px, vy + 30);
    }
    g.stroke();
    for (const k of win.skipped) {
      const lane = win.codes.visits.indexOf(k.station);
      const px = mapX(k.x);
      g.fillStyle = waitColours.starved;
      g.beginPath();
      g.moveTo(px - 5, vy + 27);
      g.lineTo(px + 5, vy + 27);
      g.lineTo(px, vy + 33);
      g.fill();
      if (lane >= 0) {
        g.fillStyle = laneColour(lane);
        g.fillRect(px - 2, vy + 27, 4, 2);
      }
    }

    // the lanes
    win.lanes.forEach((lane, i) => {
      const y = AXIS_H + VISITS_H + i * LANE_H;
      g.fillStyle = line;
      g.globalAlpha = 0.6;
      g.fillRect(0, y, width, 1);
      g.globalAlpha = 1;
      g.fillStyle = requestLineColour;
      for (const p of lane.requestLine) bar(p.x0, p.x1, y + ROW.line[0], ROW.line[1]);
      laneRows[i].forEach(items);
      // marks: a retried span gets a notch at its start, an unanswered one an open end
      for (const it of lane.exchanges.items) {
        if (it.x1 < lo || it.code === 0) continue;
        if (it.x0 > hi) break;
        const a = mapX(it.x0);
        const b = mapX(it.x1);
        if (b < 0 || a > width) continue;
        const ey = y + ROW.exchange[0];
        if (it.code === 1) {
          g.fillStyle = text;
          g.beginPath();
          g.moveTo(a, ey - 3);
          g.lineTo(a + 6, ey - 3);
          g.lineTo(a, ey + 4);
          g.fill();
        } else if (it.code === 2) {
          g.strokeStyle = text;
          g.lineWidth = 1.5;
          g.beginPath();
          g.moveTo(b - 4, ey + 3);
          g.lineTo(b + 4, ey + ROW.exchange[1] - 3);
          g.moveTo(b + 4, ey + 3);
          g.lineTo(b - 4, ey + ROW.exchange[1] - 3);
          g.stroke();
          g.lineWidth = 1;
        }
      }
    });

    // the selected exchange
    let box: { x: number; y: number } | null = null;
    if (selectedId !== null) {
      win.lanes.forEach((lane, i) => {
        const it = lane.exchanges.items.find((e) => e.id === selectedId);
        if (!it) return;
        const y = AXIS_H + VISITS_H + i * LANE_H + ROW.exchange[0];
        const a = mapX(it.x0);
        const b = Math.max(a + 2, mapX(it.x1));
        g.strokeStyle = text;
        g.lineWidth = 2;
        g.strokeRect(a - 2, y - 2, b - a + 4, ROW.exchange[1] + 4);
        g.lineWidth = 1;
        box = { x: Math.round((a + b) / 2), y: Math.round(y + ROW.exchange[1] / 2) };
      });
    }
    // where the selected span is, for tests and tools that click it
    const w = wrap.current;
    if (w) {
      w.dataset.drawn = String(win.lanes.length);
      if (box) {
        w.dataset.selectedX = String((box as { x: number }).x);
        w.dataset.selectedY = String((box as { y: number }).y);
      } else {
        delete w.dataset.selectedX;
        delete w.dataset.selectedY;
      }
    }
    onDrawn?.(performance.now() - started);
  }, [win, view, width, height, selectedId, mapX, onDrawn]);

  // the wheel zooms (a horizontal wheel or shift pans); passive listeners cannot stop the page scrolling
  useEffect(() => {
    const c = canvas.current;
    if (!c) return;
    const wheel = (e: WheelEvent) => {
      e.preventDefault();
      const rect = c.getBoundingClientRect();
      const at = Math.min(1, Math.max(0, (e.clientX - rect.left) / rect.width));
      if (e.shiftKey || Math.abs(e.deltaX) > Math.abs(e.deltaY)) onPan((e.shiftKey ? e.deltaY : e.deltaX) / rect.width);
      else onZoom(Math.pow(1.0015, e.deltaY), at);
    };
    c.addEventListener('wheel', wheel, { passive: false });
    return () => c.removeEventListener('wheel', wheel);
  }, [onPan, onZoom]);

  const hit = (clientX: number, clientY: number) => {
    const c = canvas.current!;
    const rect = c.getBoundingClientRect();
    const x = clientX - rect.left;
    const y = clientY - rect.top - AXIS_H - VISITS_H;
    if (y < 0) return;
    const laneIndex = Math.floor(y / LANE_H);
    const lane = win.lanes[laneIndex];
    if (!lane) return;
    const inLane = y - laneIndex * LANE_H;
    if (inLane < ROW.station[0]) return;
    // the span under the pointer (3 px of slack for thin ones)
    const item = lane.exchanges.items.find((it) => mapX(it.x0) - 3 <= x && x <= Math.max(mapX(it.x1), mapX(it.x0) + 2) + 3);
    if (item && inLane >= ROW.exchange[0] - 4) return onSelect(item.id, lane.station);
    const rows = [lane.exchanges, lane.stationFrames, lane.serverFrames];
    const counted = rows.some((r) => r.columns.some((col) => Math.abs(mapX(col.x) - x) <= 3));
    if (counted) {
      const t = view.from + (x / width) * (view.to - view.from);
      const span = (view.to - view.from) / 8;
      onZoomTo({ from: t - span / 2, to: t + span / 2 });
    }
  };

  return (
    <div ref={wrap} className="relative w-full select-none">
      <canvas
        ref={canvas}
        data-testid="schedule-canvas"
        role="img"
        aria-label="Schedule: the server's visits and each station's request line, frames and exchanges on one time axis. Use the exchange lists beside it to reach each exchange by keyboard."
        style={{ width, height, touchAction: 'none', cursor: drag.current ? 'grabbing' : 'grab' }}
        onPointerDown={(e) => {
          drag.current = { x: e.clientX, moved: false };
          (e.target as HTMLCanvasElement).setPointerCapture(e.pointerId);
        }}
        onPointerMove={(e) => {
          const d = drag.current;
          if (!d) return;
          const dx = e.clientX - d.x;
          if (Math.abs(dx) < 2 && !d.moved) return;
          d.moved = true;
          d.x = e.clientX;
          onPan(-dx / width);
        }}
        onPointerUp={(e) => {
          const d = drag.current;
          drag.current = null;
          if (d && !d.moved) hit(e.clientX, e.clientY);
        }}
      />
    </div>
  );
}
