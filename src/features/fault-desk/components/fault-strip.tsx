import type { DamageCauseName, FaultBinsView } from '../../../../shared/schemas';
import { formatDuration, formatSeconds } from '../../../components/units';
import { causeColours, causeLabels } from './cause-labels';

const ORDER: DamageCauseName[] = [
  'bad-fcs-explained',
  'bad-fcs-unexplained',
  'abort',
  'short',
  'residue',
  'line-anomaly',
  'tx-underrun',
  'underrun-fragment',
  'rx-overrun',
  'octet-timing',
];

/** Damaged frames over the capture's time, stacked by cause, with line anomalies as ticks below: clusters stand out. */
export function FaultStrip({ bins }: { bins: FaultBinsView }) {
  const n = bins.frames.length;
  const total = bins.frames.reduce((a, b) => a + b, 0);
  const anomalies = bins.anomalies.reduce((a, b) => a + b, 0);
  const max = Math.max(1, ...bins.frames);
  const maxA = Math.max(1, ...bins.anomalies);
  const W = 760;
  const H = 70;
  const A = 14;
  const barW = W / n;
  const end = bins.start[n - 1] + bins.binSeconds;
  return (
    <svg
      viewBox={`0 0 ${W} ${H + A + 22}`}
      className="w-full"
      role="img"
      aria-label={`Damage over time: ${total} damaged frames and ${anomalies} line anomalies in ${n} slices of ${formatDuration(bins.binSeconds)}`}
      data-testid="fault-strip"
    >
      {bins.frames.map((count, i) => {
        let y = H;
        return (
          <g key={i}>
            <title>
              {formatSeconds(bins.start[i])} – {formatSeconds(bins.start[i] + bins.binSeconds)}: {count} damaged frames
              {ORDER.filter((c) => bins.byCause[c][i] > 0)
                .map((c) => `, ${bins.byCause[c][i]} ${causeLabels[c].toLowerCase()}`)
                .join('')}
              ; {bins.anomalies[i]} line anomalies
            </title>
            {ORDER.map((c) => {
              const v = bins.byCause[c][i];
              if (v === 0) return null;
              const h = (v / max) * (H - 4);
              y -= h;
              return <rect key={c} x={i * barW + 0.5} y={y} width={Math.max(1, barW - 1)} height={h} fill={causeColours[c]} />;
            })}
            {bins.anomalies[i] > 0 ? (
              <rect x={i * barW + 0.5} y={H + 3} width={Math.max(1, barW - 1)} height={(bins.anomalies[i] / maxA) * (A - 3)} fill="var(--color-ink-400)" />
            ) : null}
          </g>
        );
      })}
      <line x1={0} x2={W} y1={H} y2={H} stroke="var(--fl-line)" />
      <text x={2} y={H + A + 16} className="fill-muted text-[10px]">
        0 s
      </text>
      <text x={W / 2} y={H + A + 16} textAnchor="middle" className="fill-muted text-[10px]">
        damaged frames by cause (bars), line anomalies (grey, below)
      </text>
      <text x={W - 2} y={H + A + 16} textAnchor="end" className="fill-muted text-[10px]">
        {formatDuration(end)}
      </text>
    </svg>
  );
}
