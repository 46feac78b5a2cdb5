import type { FrameDetail, WaveformWindow } from '../../../../shared/schemas';
import { formatDelta } from '../../../components/units';
import type { LineBit } from './frame-bits';

const LANE = 42;
const LABEL = 86;
const TOP = 26;

const laneColour: Record<WaveformWindow['channels'][number]['role'], string> = {
  clock: 'var(--color-ink-400)',
  data: 'var(--color-tide-500)',
  handshake: 'var(--color-flare-600)',
};

interface Props {
  window: WaveformWindow;
  frame: FrameDetail['frame'];
  bits: LineBit[];
  /** line-bit position of the suspect bit, if any */
  suspect: number | null;
}

/**
 * Clock, data and handshake levels around the frame, drawn from the stored samples. Bit cells
 * are laid out between the frame's first and last bit samples; flags sit just outside them.
 */
export function WaveformView({ window: w, frame, bits, suspect }: Props) {
  const span = Math.max(1, w.toSample - w.fromSample);
  const n = Math.max(1, bits.length);
  const cell = n > 1 ? (frame.lastSample - frame.firstSample) / (n - 1) : span / 16;
  const width = Math.min(6000, Math.max(960, Math.round((span / cell) * 9)));
  const plot = width - LABEL - 8;
  const x = (s: number) => LABEL + ((s - w.fromSample) / span) * plot;
  const height = TOP + w.channels.length * LANE + 8;
  const cellStart = (k: number) => frame.firstSample + (k - 0.5) * cell;
  const showBits = (cell / span) * plot >= 4;
  const flagWidth = 8 * cell;
  // the axis counts line time from the frame's first bit, in the unit that keeps it readable
  const fromFrame = (s: number) => formatDelta((s - frame.firstSample) * w.samplePeriodSeconds);
  const endShown = cellStart(n) <= w.toSample;
  const thinned = w.channels.some((c) => c.thinned);

  return (
    <div className="space-y-1">
    {!endShown || thinned ? (
      <p className="text-xs text-muted">
        {!endShown ? 'The frame is longer than one window: this shows its start. ' : ''}
        {thinned ? 'Stretches with more changes than the drawing has pixels are drawn as solid strokes.' : ''}
      </p>
    ) : null}
    <div className="overflow-x-auto rounded-md border border-line bg-canvas" data-testid="waveform">
      <svg width={width} height={height} role="img" aria-label={`Waveform of ${w.channels.map((c) => c.name).join(', ')} around the frame`} className="block">
        {/* flags before and after, the frame body, stuffed zeros and the suspect bit as bands behind the traces */}
        <rect x={x(cellStart(0) - flagWidth)} y={TOP - 4} width={(flagWidth / span) * plot} height={height - TOP} fill="var(--color-ink-400)" opacity={0.12} />
        {endShown ? <rect x={x(cellStart(n))} y={TOP - 4} width={(flagWidth / span) * plot} height={height - TOP} fill="var(--color-ink-400)" opacity={0.12} /> : null}
        <text x={x(cellStart(0) - flagWidth / 2)} y={14} textAnchor="middle" className="fill-muted text-[10px]">
          flag
        </text>
        {endShown ? (
          <text x={x(cellStart(n) + flagWidth / 2)} y={14} textAnchor="middle" className="fill-muted text-[10px]">
            flag
          </text>
        ) : null}
        {/* one path for all stuffed zeros and one for all cell boundaries: a long frame would otherwise add a node per bit */}
        <path
          d={bits.map((b, k) => (b.stuffed ? `M${x(cellStart(k))},${TOP - 4}h${(cell / span) * plot}v${height - TOP}h${-(cell / span) * plot}Z` : '')).join('')}
          fill="var(--color-flare-500)"
          opacity={0.22}
        />
        {suspect !== null && suspect >= 0 ? (
          <g data-testid="waveform-suspect">
            <rect x={x(cellStart(suspect))} y={TOP - 4} width={Math.max(3, (cell / span) * plot)} height={height - TOP} fill="#e0582f" opacity={0.35} />
            <text x={x(cellStart(suspect) + cell / 2)} y={14} textAnchor="middle" fill="#e0582f" className="text-[10px] font-semibold">
              suspect bit
            </text>
          </g>
        ) : null}
        {showBits ? (
          <path
            d={Array.from({ length: n + 1 }, (_, k) => `M${x(cellStart(k))},${TOP - 2}V${height - 6}`).join('')}
            stroke="var(--color-ink-400)"
            strokeOpacity={0.25}
            strokeWidth={1}
          />
        ) : null}
        {(endShown ? [cellStart(0), cellStart(n)] : [cellStart(0)]).map((s, i) => (
          <g key={`edge${i}`}>
            <line x1={x(s)} x2={x(s)} y1={TOP - 6} y2={height - 2} stroke="var(--color-tide-600)" strokeWidth={1.5} strokeDasharray="4 3" />
            <text x={x(s) + (i === 0 ? 3 : -3)} y={height - 4} textAnchor={i === 0 ? 'start' : 'end'} className="fill-muted text-[10px]">
              {i === 0 ? 'frame start' : 'frame end'}
            </text>
          </g>
        ))}
        <text x={LABEL} y={TOP - 8} className="fill-muted font-mono text-[10px]" data-testid="waveform-axis-start">
          {fromFrame(w.fromSample)}
        </text>
        <text x={width - 8} y={TOP - 8} textAnchor="end" className="fill-muted font-mono text-[10px]" data-testid="waveform-axis-end">
          {fromFrame(w.toSample)}
        </text>
        {w.channels.map((ch, i) => {
          const top = TOP + i * LANE + 6;
          const high = top + 4;
          const low = top + LANE - 14;
          let d = '';
          const level = ch.changes[0]?.[1] ?? 0;
          d += `M${x(w.fromSample)},${level ? high : low}`;
          for (const [s, v] of ch.changes) {
            const px = x(Math.max(w.fromSample, Math.min(w.toSample, s)));
            d += `H${px}V${v ? high : low}`;
          }
          d += `H${x(w.toSample)}`;
          return (
            <g key={ch.name}>
              <text x={8} y={top + LANE / 2 - 2} className="fill-text font-mono text-[11px]">
                {ch.name}
              </text>
              <text x={8} y={top + LANE / 2 + 10} className="fill-muted text-[9px]">
                {ch.role}
              </text>
              <path d={d} data-lane={ch.name} fill="none" stroke={laneColour[ch.role]} strokeWidth={1.6} strokeLinejoin="miter" />
            </g>
          );
        })}
      </svg>
    </div>
    </div>
  );
}
