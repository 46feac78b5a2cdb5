import type { DurationStats, ServiceReport } from '../../../../shared/decoder/timing';
import { formatDuration } from '../../../components/units';
import { formatAddress } from '../../../lib/format';

const d = (s: DurationStats | null, key: 'median' | 'p90' | 'max' = 'median') => (s ? formatDuration(s[key]) : '—');

/** Per station: how long it waited for the server, its round trips, the server's visits to it, starvation. */
export function ServiceStats({ report, names, onStation }: { report: ServiceReport; names: Record<number, string>; onStation: (station: number) => void }) {
  const name = (a: number) => names[a] ?? `Station ${formatAddress(a)}`;
  const s = report.server;
  return (
    <div className="space-y-3">
      <dl className="grid grid-cols-2 gap-2 text-sm sm:grid-cols-5" aria-label="The server's round">
        <Fig label="Visiting order" value={s.order.map(name).join(' → ') || '—'} />
        <Fig label="Rounds · visits" value={`${s.rounds} · ${s.visits}`} />
        <Fig label="Round period (median · max)" value={`${d(s.roundPeriod)} · ${d(s.roundPeriod, 'max')}`} />
        <Fig label="Time per visit (median)" value={d(s.timePerVisit)} />
        <Fig label="Steps in order" value={s.stepsInOrder === null ? '—' : `${(s.stepsInOrder * 100).toFixed(0)} %`} />
      </dl>
      <div className="overflow-x-auto">
        <table className="w-full text-sm" aria-label="Service per station">
          <thead>
            <tr className="border-b border-line text-left text-xs uppercase tracking-wide text-muted">
              <th className="py-2 pr-3 font-medium">Station</th>
              <th className="py-2 pr-3 text-right font-medium">Service delay (median · p90)</th>
              <th className="py-2 pr-3 text-right font-medium">Round trip (median · max)</th>
              <th className="py-2 pr-3 text-right font-medium">Between visits (median)</th>
              <th className="py-2 pr-3 text-right font-medium">Longest wait</th>
              <th className="py-2 pr-3 text-right font-medium">Passed over</th>
              <th className="py-2 text-right font-medium">Starved waits</th>
            </tr>
          </thead>
          <tbody className="font-mono text-xs">
            {report.stations.map((st) => (
              <tr key={st.station} className={`border-b border-line/70 last:border-0 ${st.starved > 0 ? 'bg-danger-soft/40' : ''}`} data-testid="service-row">
                <td className="py-1.5 pr-3 font-sans text-sm">
                  <button type="button" className="text-link hover:underline" onClick={() => onStation(st.station)}>
                    {name(st.station)}
                  </button>
                </td>
                <td className="py-1.5 pr-3 text-right">
                  {d(st.serviceDelay)} · {d(st.serviceDelay, 'p90')}
                </td>
                <td className="py-1.5 pr-3 text-right">
                  {d(st.roundTrip)} · {d(st.roundTrip, 'max')}
                </td>
                <td className="py-1.5 pr-3 text-right">{d(st.betweenVisits)}</td>
                <td className="py-1.5 pr-3 text-right">{st.longestWait ? `${formatDuration(st.longestWait.seconds)}${st.longestWait.rounds !== null ? ` (${st.longestWait.rounds.toFixed(1)} rounds)` : ''}` : '—'}</td>
                <td className="py-1.5 pr-3 text-right">{st.skipped}</td>
                <td className="py-1.5 text-right font-semibold">{st.starved}</td>
              </tr>
            ))}
          </tbody>
        </table>
      </div>
      <p className="text-xs text-muted">
        Service delay: from the station raising its request line to the server's first frame to it.
        {report.requestLines ? '' : ' This capture has no request lines (RTS) in its channel roles, so there are no service delays or waits; set a handshake channel named RTS for each station.'} A wait the server passed over{' '}
        {report.starveAfterRounds} rounds or more counts as starved.
      </p>
    </div>
  );
}

function Fig({ label, value }: { label: string; value: string }) {
  return (
    <div className="rounded-md border border-line px-3 py-2">
      <dt className="text-xs text-muted">{label}</dt>
      <dd className="font-mono text-sm">{value}</dd>
    </div>
  );
}
