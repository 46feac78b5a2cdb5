import { useEffect, useRef } from 'react';
// uPlot: a small canvas chart library that stays fast with hundreds of thousands of points and needs no binary at install.
import uPlot from 'uplot';
import 'uplot/dist/uPlot.min.css';
import type { CaptureOverview } from '../../../../shared/schemas';
import { frameStatusColours, frameStatusLabels } from '../../../components/status-chip';

const order = ['ok', 'bad-fcs', 'abort', 'short', 'residue'] as const;

function cssVar(name: string): string {
  return getComputedStyle(document.documentElement).getPropertyValue(name).trim() || '#888';
}

/**
 * Frames per time bin, stacked by status. uPlot has no stacking of its own: each series is the
 * running sum up to its status, drawn from the top of the stack down so each one paints over the next.
 */
export function FramesOverTimeChart({ bins }: { bins: CaptureOverview['timeBins'] }) {
  const host = useRef<HTMLDivElement>(null);
  useEffect(() => {
    const el = host.current;
    if (!el) return;
    const present = order.filter((s) => bins.counts[s]?.length);
    const length = Math.max(0, ...present.map((s) => bins.counts[s].length));
    const xs = Array.from({ length }, (_, i) => bins.start + i * bins.binSeconds);
    const sums: number[][] = [];
    let running = new Array<number>(length).fill(0);
    for (const s of present) {
      running = running.map((v, i) => v + (bins.counts[s][i] ?? 0));
      sums.push(running);
    }
    const stacked = present.map((s, k) => ({ status: s, values: sums[k] })).reverse();
    const muted = cssVar('--fl-muted');
    const grid = cssVar('--fl-line');
    const axis = { stroke: muted, grid: { stroke: grid, width: 1 }, ticks: { stroke: grid, width: 1 }, font: '11px "IBM Plex Sans", sans-serif' };
    const chart = new uPlot(
      {
        width: el.clientWidth,
        height: 220,
        legend: { show: false },
        cursor: { drag: { x: false, y: false } },
        scales: { x: { time: false } },
        axes: [
          { ...axis, label: 'seconds into the capture', labelFont: '11px "IBM Plex Sans", sans-serif', labelSize: 18 },
          { ...axis, label: 'frames per bin', labelFont: '11px "IBM Plex Sans", sans-serif', labelSize: 18, size: 48 },
        ],
        series: [
          {},
          ...stacked.map(({ status }) => ({
            label: frameStatusLabels[status],
            stroke: frameStatusColours[status],
            fill: `${frameStatusColours[status]}cc`,
            width: 1,
            paths: uPlot.paths.stepped!({ align: 1 }),
            points: { show: false },
          })),
        ],
      },
      [xs, ...stacked.map((s) => s.values)],
      el,
    );
    const resize = new ResizeObserver(() => chart.setSize({ width: el.clientWidth, height: 220 }));
    resize.observe(el);
    return () => {
      resize.disconnect();
      chart.destroy();
    };
  }, [bins]);
  return <div ref={host} className="w-full" role="img" aria-label="Frames over time, stacked by status" />;
}
