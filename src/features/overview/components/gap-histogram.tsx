import type { CaptureOverview } from '../../../../shared/schemas';
import { formatDuration } from '../../../components/units';

/** Gaps between consecutive frames on one link: a column per bin, bin edges written underneath. */
export function GapHistogram({ histogram }: { histogram: CaptureOverview['gapHistogram'] }) {
  const max = Math.max(1, ...histogram.counts);
  if (histogram.counts.length === 0) return <p className="text-sm text-muted">Too few frames for gaps.</p>;
  const W = 760;
  const H = 120;
  const barW = W / histogram.counts.length;
  return (
    <div className="overflow-x-auto">
      <svg viewBox={`0 0 ${W} ${H + 34}`} className="w-full" role="img" aria-label="Distribution of gaps between frames">
        {histogram.counts.map((c, i) => {
          const h = (c / max) * H;
          return (
            <g key={i}>
              <title>
                {formatDuration(histogram.edges[i])} – {formatDuration(histogram.edges[i + 1] ?? histogram.edges[i])}: {c} gaps
              </title>
              <rect x={i * barW + 1} y={H - h} width={Math.max(1, barW - 2)} height={h} rx={1.5} fill="var(--color-tide-500)" opacity={0.85} />
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
          gap to the previous frame on the same link
        </text>
      </svg>
    </div>
  );
}
