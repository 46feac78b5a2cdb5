import { Link } from 'react-router';
import type { CaptureOverview as Overview } from '../../../../shared/schemas';
import { Card, CardTitle } from '../../../components/card';
import { frameStatusColours, frameStatusHelp, frameStatusLabels } from '../../../components/status-chip';
import { formatCount, formatDuration } from '../../../components/units';
import { formatAddress } from '../../../lib/format';
import { useOverview } from '../../../lib/overview';
import { BarList } from './bar-list';
import { FramesOverTimeChart } from './frames-over-time-chart';
import { GapHistogram } from './gap-histogram';
import { TurnaroundHistograms } from './turnaround-histograms';
import { captureScope } from '../../../lib/scope';
import type { ReactNode } from 'react';

const statuses = ['ok', 'bad-fcs', 'abort', 'short', 'residue'] as const;
const directionWords = { 'to-server': 'station → server', 'from-server': 'server → station', unknown: 'direction not set' } as const;

function Stat({ label, value, hint }: { label: string; value: string; hint?: string }) {
  return (
    <div className="rounded-lg border border-line bg-surface px-4 py-3 shadow-sm">
      <p className="text-xs text-muted">{label}</p>
      <p className="mt-0.5 font-mono text-xl font-medium tabular-nums">{value}</p>
      {hint ? <p className="text-xs text-muted">{hint}</p> : null}
    </div>
  );
}

/** Screen 4: the shape of a capture at a glance, with a way into its damaged frames. */
/** `timing`: the line timing card, given by the route (it belongs to the schedule feature) */
export function CaptureOverview({ rigId, captureId, timing }: { rigId: number; captureId: number; timing?: ReactNode }) {
  const o: Overview = useOverview(rigId, captureId);
  const total = statuses.reduce((n, s) => n + (o.byStatus[s] ?? 0), 0);
  const damaged = total - (o.byStatus.ok ?? 0);
  const timeline = `${captureScope(rigId, captureId).page}/timeline`;
  return (
    <div className="space-y-5">
      <div className="grid gap-3 sm:grid-cols-2 lg:grid-cols-5" data-testid="overview-stats">
        <Stat label="Duration" value={formatDuration(o.durationSeconds)} />
        <Stat label="Frames" value={formatCount(total)} />
        <Stat label="Damaged frames" value={formatCount(damaged)} hint={total ? `${((damaged / total) * 100).toFixed(2)} % of frames` : undefined} />
        <Stat label="Links" value={String(o.links.length)} />
        <Stat label="Line events" value={formatCount(o.lineEvents)} />
      </div>
      {damaged > 0 ? (
        <p className="text-sm">
          <Link to={`${timeline}?status=bad-fcs,abort,short,residue`} className="font-medium text-link hover:underline">
            Show the {formatCount(damaged)} damaged frames in the timeline →
          </Link>
        </p>
      ) : null}
      {timing}
      <Card>
        <CardTitle>Frames over time</CardTitle>
        <FramesOverTimeChart bins={o.timeBins} />
        <ul className="mt-3 flex flex-wrap gap-4 text-xs" aria-label="Status colours">
          {statuses.map((s) => (
            <li key={s} className="flex items-center gap-1.5" title={frameStatusHelp[s]}>
              <span className="inline-block h-3 w-3 rounded-sm" style={{ background: frameStatusColours[s] }} aria-hidden />
              {frameStatusLabels[s]}
            </li>
          ))}
        </ul>
      </Card>
      <div className="grid gap-5 lg:grid-cols-2">
        <Card>
          <CardTitle>Frames by status</CardTitle>
          <BarList
            items={statuses.map((s) => ({ label: frameStatusLabels[s], value: o.byStatus[s] ?? 0, colour: frameStatusColours[s], hint: frameStatusHelp[s] }))}
          />
          {Object.keys(o.byKind).length > 0 ? (
            <p className="mt-4 font-mono text-xs text-muted">
              {Object.entries(o.byKind)
                .map(([k, n]) => `${k} ${formatCount(n)}`)
                .join(' · ')}
            </p>
          ) : null}
        </Card>
        <Card>
          <CardTitle>Frames per station</CardTitle>
          {o.stations.length === 0 ? (
            <p className="text-sm text-muted">No addressed frames.</p>
          ) : (
            <BarList
              colour="bg-flare-500"
              items={o.stations.map((s) => ({ label: `${formatAddress(s.address)} ${s.name ?? '(not in roster)'}`, value: s.frames }))}
            />
          )}
        </Card>
      </div>
      <Card>
        <CardTitle>Links</CardTitle>
        <table className="w-full text-sm">
          <thead>
            <tr className="border-b border-line text-left text-xs uppercase tracking-wide text-muted">
              <th className="py-2 pr-4 font-medium">Link</th>
              <th className="py-2 pr-4 font-medium">Direction</th>
              <th className="py-2 pr-4 text-right font-medium">Frames</th>
              <th className="py-2 pr-4 text-right font-medium">Octets</th>
              <th className="py-2 font-medium">Utilisation</th>
            </tr>
          </thead>
          <tbody>
            {o.links.map((l) => (
              <tr key={l.name} className="border-b border-line/70 last:border-0">
                <td className="py-2 pr-4">
                  <span className="font-mono">{l.name}</span>
                  {l.label ? <span className="ml-2 text-muted">{l.label}</span> : null}
                </td>
                <td className="py-2 pr-4 text-muted">{directionWords[l.direction]}</td>
                <td className="py-2 pr-4 text-right font-mono">{formatCount(l.frames)}</td>
                <td className="py-2 pr-4 text-right font-mono">{formatCount(l.octets)}</td>
                <td className="py-2">
                  <span className="flex items-center gap-2">
                    <span className="h-2 w-28 overflow-hidden rounded-full bg-raised">
                      <span className="block h-full bg-tide-500" style={{ width: `${Math.min(100, l.utilisation * 100)}%` }} />
                    </span>
                    <span className="font-mono text-xs">{(l.utilisation * 100).toFixed(1)} %</span>
                  </span>
                </td>
              </tr>
            ))}
          </tbody>
        </table>
      </Card>
      <Card>
        <CardTitle>Gaps between frames</CardTitle>
        <GapHistogram histogram={o.gapHistogram} />
      </Card>
      <Card>
        <CardTitle>Turnaround per station</CardTitle>
        <TurnaroundHistograms rigId={rigId} captureId={captureId} roundTripsHref={`${captureScope(rigId, captureId).page}/schedule`} />
      </Card>
    </div>
  );
}
