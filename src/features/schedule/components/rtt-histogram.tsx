import type { ExchangeStats } from '../../../../shared/schemas';
import { formatDuration } from '../../../components/units';

/** Round-trip times of the chosen stations: a column per bin, bin edges written underneath. */
export function RttHistogram({ histogram }: { histogram: ExchangeStats['histogram'] }) {
  const total = histogram.counts.reduce((n, c) => n + c, 0);
  if (total === 0) return <p className="text-sm text-muted">No answered exchanges, so no round trips to chart.</p>;
  const max = Math.max(1, ...histogram.counts);
  const W = 760;
  const H = 110;
  const barW = W / histogram.counts.length;
  const every = Math.max(1, Math.ceil(histogram.edges.length / 6));
  return (
    <svg viewBox={`0 0 ${W} ${H + 34}`} className="w-full" role="img" aria-label={`Round-trip times of ${total} answered exchanges, from ${formatDuration(histogram.edges[0])} to ${formatDuration(histogram.edges[histogram.edges.length - 1])}`}>
      {histogram.counts.map((c, i) => {
        const h = (c / max) * H;
        return (
          <g key={i}>
            <title>
              {formatDuration(histogram.edges[i])} – {formatDuration(histogram.edges[i + 1] ?? histogram.edges[i])}: {c} exchanges
            </title>
            <rect x={i * barW + 1} y={H - h} width={Math.max(1, barW - 2)} height={h} rx={1.5} fill="var(--color-flare-500)" opacity={0.9} />
            {c > 0 ? (
              <text x={i * barW + barW / 2} y={H - h - 3} textAnchor="middle" className="fill-muted text-[9px]">
                {c}
              </text>
            ) : null}
          </g>
        );
      })}
      <line x1={0} x2={W} y1={H} y2={H} stroke="var(--fl-line)" />
      {histogram.edges.map((e, i) =>
        i % every === 0 || i === histogram.edges.length - 1 ? (
          <text
            key={i}
            x={Math.min(W - 2, Math.max(2, i * barW))}
            y={H + 14}
            textAnchor={i === 0 ? 'start' : i === histogram.edges.length - 1 ? 'end' : 'middle'}
            className="fill-muted text-[10px]"
          >
            {formatDuration(e)}
          </text>
        ) : null,
      )}
      <text x={W / 2} y={H + 30} textAnchor="middle" className="fill-muted text-[10px]">
        round trip: last bit of the request to first bit of the answer
      </text>
    </svg>
  );
}
