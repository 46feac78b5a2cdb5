import type { CaptureOverview } from '../../../../shared/schemas';
import { formatDuration } from '../../../components/units';

interface Props {
  histogram: CaptureOverview['gapHistogram'];
  /** what one count is, for the bar tooltips ("gaps", "exchanges") */
  unit?: string;
  caption?: string;
  label?: string;
  empty?: string;
  colour?: string;
  /** bar area height in SVG units */
  height?: number;
}

/** A distribution of durations: a column per bin, bin edges written underneath. Used for gaps and turnarounds. */
export function GapHistogram({
  histogram,
  unit = 'gaps',
  caption = 'gap to the previous frame on the same link',
  label = 'Distribution of gaps between frames',
  empty = 'Too few frames for gaps.',
  colour = 'var(--color-tide-500)',
  height = 120,
}: Props) {
  const max = Math.max(1, ...histogram.counts);
  if (histogram.counts.length === 0 || histogram.counts.every((c) => c === 0)) return <p className="text-sm text-muted">{empty}</p>;
  const W = 760;
  const H = height;
  const barW = W / histogram.counts.length;
  return (
    <div className="overflow-x-auto">
      <svg viewBox={`0 0 ${W} ${H + 34}`} className="w-full" role="img" aria-label={label}>
        {histogram.counts.map((c, i) => {
          const h = (c / max) * H;
          return (
            <g key={i}>
              <title>
                {formatDuration(histogram.edges[i])} – {formatDuration(histogram.edges[i + 1] ?? histogram.edges[i])}: {c} {unit}
              </title>
              <rect x={i * barW + 1} y={H - h} width={Math.max(1, barW - 2)} height={h} rx={1.5} fill={colour} opacity={0.85} />
            </g>
          );
        })}
        <line x1={0} x2={W} y1={H} y2={H} stroke="var(--fl-line)" />
        {histogram.edges.map((e, i) =>
          i % Math.max(1, Math.ceil(histogram.edges.length / 6)) === 0 || i === histogram.edges.length - 1 ? (
            <text key={i} x={Math.min(W - 2, Math.max(2, i * barW))} y={H + 14} textAnchor={i === 0 ? 'start' : i === histogram.edges.length - 1 ? 'end' : 'middle'} className="fill-muted text-[10px]">
              {formatDuration(e)}
            </text>
          ) : null,
        )}
        <text x={W / 2} y={H + 30} textAnchor="middle" className="fill-muted text-[10px]">
          {caption}
        </text>
      </svg>
    </div>
  );
}
