import type { StationExchangeStats } from '../../../../shared/schemas';
import { formatCount, formatDuration } from '../../../components/units';

function Stat({ label, value, hint }: { label: string; value: string; hint?: string }) {
  return (
    <div className="rounded-lg border border-line bg-surface px-3 py-2.5 shadow-sm">
      <dt className="text-xs text-muted">{label}</dt>
      <dd className="mt-0.5 font-mono text-lg font-medium tabular-nums">{value}</dd>
      {hint ? <dd className="text-xs text-muted">{hint}</dd> : null}
    </div>
  );
}

/** Counts and round-trip figures of one station (or the sum of several, without the RTT figures that cannot be summed). */
export function RttStats({ stats }: { stats: StationExchangeStats }) {
  const rtt = stats.rtt;
  const dash = '—';
  return (
    <dl className="grid grid-cols-2 gap-2.5 sm:grid-cols-4 lg:grid-cols-8" aria-label="Round-trip statistics">
      <Stat label="Exchanges" value={formatCount(stats.count)} hint={`${formatCount(stats.answered)} answered`} />
      <Stat label="Retried" value={formatCount(stats.retried)} />
      <Stat label="Unanswered" value={formatCount(stats.unanswered)} />
      <Stat label="Min RTT" value={rtt ? formatDuration(rtt.min) : dash} />
      <Stat label="Median RTT" value={rtt ? formatDuration(rtt.median) : dash} />
      <Stat label="95th percentile" value={rtt ? formatDuration(rtt.p95) : dash} />
      <Stat label="Max RTT" value={rtt ? formatDuration(rtt.max) : dash} />
      <Stat
        label="Service delay"
        value={stats.serviceDelay ? formatDuration(stats.serviceDelay.median) : dash}
        hint={stats.serviceDelay ? `median of ${stats.serviceDelay.count}, max ${formatDuration(stats.serviceDelay.max)}` : 'needs the RTS line'}
      />
    </dl>
  );
}
