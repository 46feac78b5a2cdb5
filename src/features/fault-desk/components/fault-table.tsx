import { Link } from 'react-router';
import type { FaultDeskView, FaultFrameRow } from '../../../../shared/schemas';
import { StatusChip } from '../../../components/status-chip';
import { formatHexByte, formatSeconds } from '../../../components/units';
import { causeLabels } from './cause-labels';

const SEARCH_WORDS: Record<FaultFrameRow['retransmissionSearch'], string> = {
  found: '',
  'not-found': 'not sent again',
  'capture-ended': 'capture ended first',
  'not-applicable': '—',
};

interface Props {
  desk: FaultDeskView;
  frameHref: (frameId: number) => string;
}

/** One row per damaged frame: where, what, why, and the frames to open (the frame itself, its retransmission). */
export function FaultTable({ desk, frameHref }: Props) {
  if (desk.rows.length === 0) return <p className="text-sm text-muted">No damaged frames in this group.</p>;
  return (
    <div className="overflow-x-auto">
      <table className="w-full text-sm" aria-label="Damaged frames">
        <thead className="border-b border-line text-left text-xs text-muted">
          <tr>
            <th className="px-2 py-1 font-normal">time (s)</th>
            <th className="px-2 py-1 font-normal">link · seq</th>
            <th className="px-2 py-1 font-normal">station</th>
            <th className="px-2 py-1 font-normal">status</th>
            <th className="px-2 py-1 font-normal">diagnosis</th>
            <th className="px-2 py-1 font-normal">retransmission</th>
          </tr>
        </thead>
        <tbody>
          {desk.rows.map((r) => (
            <tr key={`${r.link}:${r.seq}`} className="border-b border-line align-top" data-testid="fault-row" data-cause={r.cause}>
              <td className="px-2 py-1.5 font-mono">
                {r.frameId !== null ? (
                  <Link to={frameHref(r.frameId)} className="text-link hover:underline" aria-label={`Open frame ${r.seq} on ${r.link} in the inspector`}>
                    {formatSeconds(r.t)}
                  </Link>
                ) : (
                  formatSeconds(r.t)
                )}
              </td>
              <td className="px-2 py-1.5 font-mono whitespace-nowrap">
                {r.link} · {r.seq}
              </td>
              <td className="px-2 py-1.5 whitespace-nowrap">
                {r.station === null ? '—' : <span className="font-mono">0x{formatHexByte(r.station)}</span>} {r.stationName ?? ''}
              </td>
              <td className="px-2 py-1.5">
                <StatusChip status={r.status} />
              </td>
              <td className="px-2 py-1.5">
                <span className="sr-only">{causeLabels[r.cause]}: </span>
                {r.diagnosis}
              </td>
              <td className="px-2 py-1.5 whitespace-nowrap">
                {r.retransmissionFrameId !== null ? (
                  <Link to={frameHref(r.retransmissionFrameId)} className="text-link hover:underline">
                    open ({r.retransmissionBy === 'call' ? 'same call' : 'same N(S)'})
                  </Link>
                ) : (
                  <span className="text-muted">{SEARCH_WORDS[r.retransmissionSearch]}</span>
                )}
              </td>
            </tr>
          ))}
        </tbody>
      </table>
    </div>
  );
}
