import { Link } from 'react-router';
import type { ExchangeRow } from '../../../../shared/schemas';
import { ErrorNotice } from '../../../components/notice';
import { formatDuration, formatSeconds } from '../../../components/units';
import { formatAddress } from '../../../lib/format';
import { OutcomeChip } from './outcome-chip';

interface Props {
  row: ExchangeRow | undefined;
  error: unknown;
  frameHref: (id: number) => string;
  timelineHref: (row: ExchangeRow) => string;
  onClose: () => void;
}

/** The exchange a span opened: what was asked and answered, its times, and every frame of it. */
export function ExchangePanel({ row, error, frameHref, timelineHref, onClose }: Props) {
  if (error) return <ErrorNotice error={error} />;
  if (!row) return <p className="text-sm text-muted">Loading the exchange…</p>;
  const frames: { label: string; id: number }[] = [
    ...(row.requestFrameId !== null ? [{ label: 'Request', id: row.requestFrameId }] : []),
    ...row.retryFrameIds.map((id, i) => ({ label: `Sent again (${i + 1})`, id })),
    ...row.responseFrameIds.map((id, i) => ({ label: row.responseFrameIds.length > 1 ? `Answer (${i + 1})` : 'Answer', id })),
  ];
  const what = [row.call.name ?? (row.call.code === null ? 'call ?' : `call ${row.call.code}`), row.fileName, row.recordNumber !== null ? `record ${row.recordNumber}` : null].filter(Boolean).join(' · ');
  return (
    <section aria-label="Selected exchange" className="rounded-md border border-line bg-raised p-3 text-sm" data-testid="exchange-panel">
      <div className="mb-2 flex flex-wrap items-center gap-3">
        <h3 className="font-semibold">{what}</h3>
        <span className="text-muted">{row.station.name ?? formatAddress(row.station.address)}</span>
        <OutcomeChip outcome={row.outcome} />
        <button type="button" onClick={onClose} className="ml-auto text-xs text-link hover:underline">
          Close
        </button>
      </div>
      <dl className="mb-2 grid grid-cols-2 gap-x-4 gap-y-1 font-mono text-xs sm:grid-cols-4">
        <dt className="text-muted">Request at</dt>
        <dd>{formatSeconds(row.tRequest)} s</dd>
        <dt className="text-muted">Round trip</dt>
        <dd>{row.rttSeconds === null ? 'no answer' : formatDuration(row.rttSeconds)}</dd>
        <dt className="text-muted">Status</dt>
        <dd>{row.status === null ? '—' : `${formatAddress(row.status)}${row.statusMeaning ? ` ${row.statusMeaning}` : ''}`}</dd>
        <dt className="text-muted">Service delay</dt>
        <dd>{row.serviceDelaySeconds === null ? '—' : formatDuration(row.serviceDelaySeconds)}</dd>
      </dl>
      <ul className="flex flex-wrap gap-3" aria-label="Frames of the exchange">
        {frames.map((f) => (
          <li key={`${f.label}-${f.id}`}>
            <Link to={frameHref(f.id)} className="text-link hover:underline">
              {f.label} · frame {f.id}
            </Link>
          </li>
        ))}
        <li>
          <Link to={timelineHref(row)} className="text-link hover:underline">
            In the timeline
          </Link>
        </li>
      </ul>
    </section>
  );
}
