import { Link } from 'react-router';
import { Card, CardTitle } from '../../../components/card';
import { formatDuration } from '../../../components/units';
import { formatAddress } from '../../../lib/format';
import { useFaults } from '../../../lib/faults';
import { useService } from '../api/get-service';
import { captureScope } from '../../../lib/scope';

/**
 * The overview's way into line timing: the server's round, the starved stations and the
 * transmitter under-runs, each one link away from where it shows.
 */
export function TimingCard({ rigId, captureId }: { rigId: number; captureId: number }) {
  const service = useService(rigId, captureId);
  const underruns = useFaults(rigId, captureId, 'tx-underrun', 0);
  const base = captureScope(rigId, captureId).page;
  const report = service.data?.report ?? null;
  const names = service.data?.extent?.stationNames ?? {};
  const name = (a: number) => names[a] ?? `station ${formatAddress(a)}`;
  const cuts = underruns.data?.available ? (underruns.data.groups.find((g) => g.cause === 'tx-underrun')?.count ?? 0) : 0;
  const firstCut = underruns.data?.rows[0];
  // one line per starved station: its longest starved wait
  const starved = new Map<number, { rise: number; end: number; seconds: number; passedOver: number }>();
  for (const w of report?.starved ?? []) if (!starved.has(w.station)) starved.set(w.station, w);
  return (
    <Card>
      <CardTitle>Line timing</CardTitle>
      {service.error ? <p className="text-sm text-muted">The line timing could not be worked out for this capture.</p> : null}
      {!service.data && !service.error ? <p className="text-sm text-muted">Working out the server’s round…</p> : null}
      {service.data && !report ? <p className="text-sm text-muted">No schedule: set each link’s direction in the channel roles and decode again.</p> : null}
      {report ? (
        <ul className="space-y-1.5 text-sm" data-testid="timing-card">
          <li>
            The server visits {report.server.order.map(name).join(' → ') || 'no station'}
            {report.server.roundPeriod ? `, one round every ${formatDuration(report.server.roundPeriod.median)} (median)` : ''}.{' '}
            <Link to={`${base}/schedule`} className="font-medium text-link hover:underline">
              Schedule →
            </Link>
          </li>
          {[...starved].map(([station, w]) => (
            <li key={station}>
              <Link
                to={`${base}/schedule?${new URLSearchParams({ station: String(station), from: Math.max(0, w.rise - (w.end - w.rise) * 0.5).toFixed(9), to: (w.end + (w.end - w.rise) * 0.5).toFixed(9) })}`}
                className="font-medium text-link hover:underline"
              >
                {name(station)} starved: waited {formatDuration(w.seconds)}, passed over {w.passedOver} times →
              </Link>
            </li>
          ))}
          {starved.size === 0 ? <li className="text-muted">No station starved (passed over {report.starveAfterRounds} rounds or more).</li> : null}
          {cuts > 0 ? (
            <li>
              <Link to={`${base}/faults?cause=tx-underrun`} className="font-medium text-link hover:underline">
                {cuts} transmitter under-run{cuts === 1 ? '' : 's'}
                {firstCut ? ` (first from ${firstCut.stationName ?? (firstCut.station !== null ? name(firstCut.station) : firstCut.link)})` : ''} →
              </Link>
            </li>
          ) : underruns.data?.available ? (
            <li className="text-muted">No transmitter under-run.</li>
          ) : null}
        </ul>
      ) : null}
    </Card>
  );
}
