import { Link } from 'react-router';
import type { StationExchangeStats } from '../../../../shared/schemas';
import { ErrorNotice } from '../../../components/notice';
import { formatDuration } from '../../../components/units';
import { formatAddress } from '../../../lib/format';
import { useStationTurnarounds, useTurnaroundSummary } from '../api/get-turnaround';
import { GapHistogram } from './gap-histogram';

const NO_EXCHANGES =
  'No exchanges yet: the call layer paired no request with an answer in this capture. Exchanges need both directions of a station’s line in the channel roles and information fields the rig’s field map can read.';

function stationLabel(s: StationExchangeStats): string {
  return `${s.name ?? 'Station'} (${formatAddress(s.address)})`;
}

/** Turnaround (request's last bit → answer's first bit) per station, one histogram each, binned over that station alone. */
export function TurnaroundHistograms({ rigId, captureId, roundTripsHref }: { rigId: number; captureId: number; roundTripsHref: string }) {
  const summary = useTurnaroundSummary(rigId, captureId);
  const stations = summary.data?.stations ?? [];
  const perStation = useStationTurnarounds(
    rigId,
    captureId,
    stations.map((s) => s.address),
  );
  if (summary.error) return <ErrorNotice error={summary.error} />;
  if (summary.isPending) return <p className="text-sm text-muted">Loading exchanges…</p>;
  if (stations.length === 0) return <p className="text-sm text-muted">{NO_EXCHANGES}</p>;
  return (
    <ul className="space-y-4" aria-label="Turnaround per station">
      {stations.map((s, i) => {
        const q = perStation[i];
        return (
          <li key={s.address} className="space-y-1" aria-label={`Turnaround of ${stationLabel(s)}`}>
            <p className="flex flex-wrap items-baseline justify-between gap-2 text-sm">
              <Link to={`${roundTripsHref}?station=${s.address}`} className="font-medium text-link hover:underline">
                {stationLabel(s)}
              </Link>
              <span className="font-mono text-xs text-muted">
                {s.answered + s.retried} answered of {s.count}
                {s.rtt ? ` · median ${formatDuration(s.rtt.median)} · p95 ${formatDuration(s.rtt.p95)}` : ''}
              </span>
            </p>
            {q?.error ? (
              <ErrorNotice error={q.error} />
            ) : !q?.data ? (
              <p className="text-sm text-muted">Loading…</p>
            ) : (
              <GapHistogram
                histogram={q.data.histogram}
                unit="exchanges"
                caption="turnaround: last bit of the request to first bit of the answer"
                label={`Turnaround of ${stationLabel(s)}: ${s.answered + s.retried} answered exchanges`}
                empty="No answered exchanges yet for this station, so no turnaround to chart."
                colour="var(--color-flare-500)"
                height={80}
              />
            )}
          </li>
        );
      })}
    </ul>
  );
}
