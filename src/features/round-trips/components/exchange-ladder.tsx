import { Link } from 'react-router';
import type { ExchangeRow } from '../../../../shared/schemas';
import { formatDuration, formatSeconds } from '../../../components/units';
import { formatAddress } from '../../../lib/format';

export interface LadderLane {
  address: number;
  name: string;
}

interface LadderProps {
  rows: ExchangeRow[];
  /** one lane per station, in the order drawn; the server's lane is added on the right */
  lanes: LadderLane[];
  /** href of a frame's inspector page */
  frameHref: (frameId: number) => string;
  timelineHref: (row: ExchangeRow) => string;
  selectedId: number | null;
}

const W = 920;
const GUTTER = 170;
const HEAD = 46;
const BAND = 92;
/** a retried exchange draws one more arrow */
const RETRIED_BAND = 110;
const SERVER_X = W - 70;

function callText(row: ExchangeRow): string {
  const parts = [row.call.name ?? (row.call.code === null ? 'call ?' : `call ${row.call.code}`)];
  if (row.fileName) parts.push(row.fileName);
  if (row.recordNumber !== null) parts.push(`rec ${row.recordNumber}`);
  return parts.join(' · ');
}

function answerText(row: ExchangeRow): string {
  const status = row.status === null ? 'answer' : `status ${formatAddress(row.status)}${row.statusMeaning ? ` ${row.statusMeaning}` : ''}`;
  return row.rttSeconds === null ? status : `${status} · RTT ${formatDuration(row.rttSeconds)}`;
}

/** One arrow: a frame going from one lane to another, a link to the frame in the inspector. */
function Arrow({ x1, y1, x2, y2, href, label, text, colour, dashed, textAt }: {
  x1: number; y1: number; x2: number; y2: number;
  href: string | null; label: string; text: string; colour: string; dashed?: boolean; textAt: 'above' | 'below';
}) {
  const dir = Math.sign(x2 - x1);
  const head = `${x2},${y2} ${x2 - dir * 9},${y2 - 4.5} ${x2 - dir * 9},${y2 + 4.5}`;
  const mx = (x1 + x2) / 2;
  const my = (y1 + y2) / 2 + (textAt === 'above' ? -6 : 13);
  const body = (
    <g className="ladder-arrow">
      <title>{label}</title>
      {/* a wide invisible stroke makes the thin arrow easy to hit */}
      <line x1={x1} y1={y1} x2={x2} y2={y2} stroke="transparent" strokeWidth={14} />
      <line x1={x1} y1={y1} x2={x2 - dir * 8} y2={y2} stroke={colour} strokeWidth={1.8} strokeDasharray={dashed ? '6 4' : undefined} />
      <polygon points={head} fill={colour} />
      <text x={mx} y={my} textAnchor="middle" className="fill-text font-mono text-[11px]" style={{ paintOrder: 'stroke', stroke: 'var(--fl-surface)', strokeWidth: 4 }}>
        {text}
      </text>
    </g>
  );
  if (!href) return body;
  return (
    <Link to={href} aria-label={label} className="cursor-pointer [&:hover_line]:stroke-[2.6] focus-visible:outline-none [&:focus-visible_text]:underline">
      {body}
    </Link>
  );
}

/**
 * The ladder: a lane per station and one for the server, time running down. Each exchange gets a
 * band of its own (spacing is by exchange, not to scale; the times are written on the arrows and
 * in the left margin), so a 2 ms answer and a 400 ms gap are both readable.
 */
export function ExchangeLadder({ rows, lanes, frameHref, timelineHref, selectedId }: LadderProps) {
  const laneX = new Map<number, number>();
  const span = SERVER_X - GUTTER - 60;
  lanes.forEach((l, i) => laneX.set(l.address, GUTTER + 20 + (lanes.length === 1 ? 0 : (i * span * 0.55) / Math.max(1, lanes.length - 1))));
  const tops: number[] = [];
  let y = HEAD;
  for (const row of rows) {
    tops.push(y);
    y += row.retries > 0 ? RETRIED_BAND : BAND;
  }
  const H = y + 16;
  return (
    <div className="overflow-x-auto">
      <svg viewBox={`0 0 ${W} ${H}`} className="w-full min-w-[760px]" role="group" aria-label={`Ladder of ${rows.length} exchanges`}>
        {lanes.map((l) => (
          <g key={l.address}>
            <text x={laneX.get(l.address)} y={18} textAnchor="middle" className="fill-text text-[12px] font-semibold">
              {l.name}
            </text>
            <text x={laneX.get(l.address)} y={32} textAnchor="middle" className="fill-muted font-mono text-[10px]">
              {formatAddress(l.address)}
            </text>
            <line x1={laneX.get(l.address)} x2={laneX.get(l.address)} y1={HEAD - 6} y2={H - 6} stroke="var(--color-ink-400)" strokeWidth={2} />
          </g>
        ))}
        <text x={SERVER_X} y={18} textAnchor="middle" className="fill-text text-[12px] font-semibold">
          Server
        </text>
        <line x1={SERVER_X} x2={SERVER_X} y1={HEAD - 6} y2={H - 6} stroke="var(--color-ink-400)" strokeWidth={2} />
        {rows.map((row, i) => {
          const y0 = tops[i] + 10;
          const sx = laneX.get(row.station.address) ?? GUTTER + 20;
          const retried = row.retries > 0;
          const reqEndY = y0 + 14;
          const resendY = y0 + 32;
          const respY = retried ? y0 + 58 : y0 + 46;
          const selected = row.id === selectedId;
          const answerId = row.responseFrameIds[0] ?? null;
          const resendId = row.retryFrameIds[row.retryFrameIds.length - 1] ?? null;
          return (
            <g key={row.id} data-exchange={row.id}>
              {selected ? <rect x={0} y={y0 - 14} width={W} height={(retried ? RETRIED_BAND : BAND) - 4} rx={4} fill="var(--color-flare-500)" opacity={0.12} /> : null}
              <text x={6} y={y0 + 2} className="fill-text font-mono text-[11px]">
                t {formatSeconds(row.tRequest)} s
              </text>
              {i > 0 ? (
                <text x={6} y={y0 + 16} className="fill-muted font-mono text-[10px]">
                  {formatDuration(Math.max(0, row.tRequest - rows[i - 1].tRequest))} after previous
                </text>
              ) : null}
              {row.serviceDelaySeconds !== null ? (
                <text x={6} y={y0 + 30} className="fill-muted font-mono text-[10px]">
                  RTS → server {formatDuration(row.serviceDelaySeconds)}
                </text>
              ) : null}
              <Link to={timelineHref(row)} aria-label={`Exchange at ${formatSeconds(row.tRequest)} s in the timeline`}>
                <text x={6} y={y0 + 46} className="fill-link text-[10px] underline">
                  in the timeline
                </text>
              </Link>
              <Arrow
                x1={sx}
                y1={y0}
                x2={SERVER_X}
                y2={reqEndY}
                href={row.requestFrameId === null ? null : frameHref(row.requestFrameId)}
                label={`Request ${callText(row)} from ${row.station.name ?? formatAddress(row.station.address)} at ${formatSeconds(row.tRequest)} s`}
                text={callText(row)}
                colour="var(--fl-text)"
                textAt="above"
              />
              {retried ? (
                <Arrow
                  x1={sx}
                  y1={resendY - 10}
                  x2={SERVER_X}
                  y2={resendY}
                  href={resendId === null ? null : frameHref(resendId)}
                  label={`Sent again (${row.retries}×) ${callText(row)}`}
                  text={`sent again${row.retries > 1 ? ` ×${row.retries}` : ''}`}
                  colour="var(--color-flare-600)"
                  dashed
                  textAt="above"
                />
              ) : null}
              {row.outcome === 'unanswered' || row.tResponse === null ? (
                <g>
                  <line x1={SERVER_X} x2={SERVER_X} y1={(retried ? resendY : reqEndY) + 2} y2={respY + 10} stroke="var(--fl-danger)" strokeWidth={3} strokeDasharray="2 3" />
                  <text x={SERVER_X - 10} y={respY + 4} textAnchor="end" className="fill-danger text-[11px] font-medium">
                    ✕ no answer within the timeout
                  </text>
                </g>
              ) : (
                <>
                  {/* the server's turnaround: from the request's last bit to its first answer bit */}
                  <rect x={SERVER_X - 3} y={(retried ? resendY : reqEndY) + 1} width={6} height={Math.max(2, respY - (retried ? resendY : reqEndY) - 2)} rx={2} fill="var(--color-flare-500)" />
                  <Arrow
                    x1={SERVER_X}
                    y1={respY}
                    x2={sx}
                    y2={respY + 14}
                    href={answerId === null ? null : frameHref(answerId)}
                    label={`Answer to ${callText(row)}: ${answerText(row)}`}
                    text={answerText(row)}
                    colour="var(--color-tide-500)"
                    textAt="below"
                  />
                </>
              )}
            </g>
          );
        })}
      </svg>
    </div>
  );
}
