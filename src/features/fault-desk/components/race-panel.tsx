import { Link } from 'react-router';
import type { RaceSummary } from '../../../../shared/decoder/faults';
import type { DamageCauseName, FaultDeskView } from '../../../../shared/schemas';
import { Card, CardTitle } from '../../../components/card';
import { formatDuration } from '../../../components/units';
import { causeColours } from './cause-labels';

const RACE_CAUSES = ['tx-underrun', 'underrun-fragment', 'rx-overrun', 'octet-timing'] as const;
const sourceWords = { clock: 'measured from the captured clock', frames: 'measured from the frames’ lengths', nominal: 'the capture settings’ nominal rate' } as const;

/** Timing races: each signature with its cause, explanation and rows; the offsets, clock spread and the budget line beside them. */
export function RacePanel({ desk, hrefFor, rigSettingsHref }: { desk: FaultDeskView; hrefFor: (cause: DamageCauseName) => string; rigSettingsHref: string }) {
  const races = desk.races;
  const counts = new Map(desk.groups.map((g) => [g.cause, g.count]));
  const found = RACE_CAUSES.filter((c) => (counts.get(c) ?? 0) > 0);
  return (
    <Card>
      <CardTitle>Timing races</CardTitle>
      {races === null ? (
        <p className="text-sm text-muted">This capture was decoded before race signatures were recorded. Decode it again to look for under-runs, over-runs and octet timing.</p>
      ) : (
        <div className="grid gap-5 lg:grid-cols-[3fr_2fr]">
          <div className="space-y-3">
            {found.length === 0 ? <p className="text-sm text-muted">No race signature in this capture: no frame was cut short, no intact request was lost, no clock period stretched inside a frame.</p> : null}
            {found.map((c) => (
              <section key={c} className="rounded-md border border-line p-3" data-testid="race-signature" data-cause={c}>
                <h3 className="flex items-center gap-2 text-sm font-semibold">
                  <span className="inline-block h-3 w-3 rounded-sm" style={{ background: causeColours[c] }} aria-hidden />
                  {desk.raceWords[c].title}
                  <Link to={hrefFor(c)} className="ml-auto text-xs font-medium text-link hover:underline">
                    {counts.get(c)} frame{counts.get(c) === 1 ? '' : 's'} →
                  </Link>
                </h3>
                <p className="mt-1 text-sm text-muted">{desk.raceWords[c].explanation}</p>
              </section>
            ))}
            {races.overruns.repeating ? (
              <p className="text-sm">
                Over-run symptoms repeat:{' '}
                {races.overruns.byRecord
                  .filter((r) => r.count > 1)
                  .slice(0, 3)
                  .map((r) => `${r.count}× ${[r.callName, r.fileName, r.recordNumber !== null ? `record ${r.recordNumber}` : null].filter(Boolean).join(' ')}`)
                  .join('; ')}
                {races.overruns.bySize.filter((s) => s.count > 1).length > 0 ? ` · by size: ${races.overruns.bySize.filter((s) => s.count > 1).map((s) => `${s.count}× ${s.octets} octets`).join(', ')}` : ''}
              </p>
            ) : null}
          </div>
          <div className="space-y-4">
            <Budget budget={races.budget} rigSettingsHref={rigSettingsHref} />
            <OffsetHistogram underruns={races.underruns} />
            <ClockSpreadView octetTiming={races.octetTiming} />
          </div>
        </div>
      )}
    </Card>
  );
}

function Budget({ budget, rigSettingsHref }: { budget: RaceSummary['budget']; rigSettingsHref: string }) {
  if (!budget) return <p className="text-sm text-muted">No budget line: the bit rate could not be measured and the capture settings give none.</p>;
  return (
    <div className="rounded-md border border-line bg-raised p-3 text-sm" data-testid="budget-line">
      <h3 className="mb-1 font-semibold">Budget per octet</h3>
      <p className="font-mono">
        {(budget.bitRate / 1000).toFixed(1)} kbit/s → {formatDuration(budget.octetSeconds)} per octet = {budget.cyclesPerOctet.toFixed(1)} CPU cycles at {budget.cpuHz / 1e6} MHz
      </p>
      <p className="mt-1 text-xs text-muted">
        Bit rate {sourceWords[budget.source]}; {formatDuration(budget.bitSeconds)} per bit ({budget.cyclesPerBit.toFixed(2)} cycles). The CPU clock is the rig’s setting —{' '}
        <Link to={rigSettingsHref} className="text-link hover:underline">
          change it
        </Link>{' '}
        and decode again.
      </p>
    </div>
  );
}

function OffsetHistogram({ underruns }: { underruns: RaceSummary['underruns'] }) {
  if (underruns.count === 0) return null;
  const max = Math.max(...underruns.offsets.map((o) => o.count));
  return (
    <div>
      <h3 className="mb-1 text-sm font-semibold">Where under-runs struck (octet offset)</h3>
      <ul className="space-y-0.5 font-mono text-xs" aria-label="Under-run octet offsets">
        {underruns.offsets.map((o) => (
          <li key={o.offset} className="flex items-center gap-2">
            <span className="w-12 text-right">{o.offset}</span>
            <span className="h-2.5 rounded-sm" style={{ width: `${Math.max(4, (o.count / max) * 160)}px`, background: causeColours['tx-underrun'] }} aria-hidden />
            <span>{o.count}</span>
          </li>
        ))}
      </ul>
      <p className="mt-1 text-xs text-muted">
        {underruns.count} cut short ({underruns.endedWithFcs} closed with a valid FCS, {underruns.endedWithAbort} aborted), {underruns.fragments} fragment{underruns.fragments === 1 ? '' : 's'}
        {underruns.recurring ? `; ${Math.round(underruns.recurring.share * 100)} % at octet ${underruns.recurring.offset} — a send loop that runs dry at the same place` : ''}.
      </p>
    </div>
  );
}

function ClockSpreadView({ octetTiming }: { octetTiming: RaceSummary['octetTiming'] }) {
  const c = octetTiming.clock;
  if (!c) return <p className="text-xs text-muted">No clock channel: the octet timing spread needs the captured clock.</p>;
  const counts = c.histogram.counts;
  // the bins as a strip of bars, at most 120 wide
  const step = Math.max(1, Math.ceil(counts.length / 120));
  const bars: number[] = [];
  for (let i = 0; i < counts.length; i += step) bars.push(counts.slice(i, i + step).reduce((a, b) => a + b, 0));
  const bmax = Math.max(1, ...bars);
  return (
    <div data-testid="octet-timing">
      <h3 className="mb-1 text-sm font-semibold">Octet timing: the clock period</h3>
      <svg viewBox={`0 0 ${bars.length} 30`} preserveAspectRatio="none" className="h-10 w-full" role="img" aria-label="Histogram of clock periods">
        {bars.map((n, i) => (
          <rect key={i} x={i} y={30 - Math.max(n > 0 ? 1 : 0, (Math.log1p(n) / Math.log1p(bmax)) * 30)} width={0.9} height={Math.max(n > 0 ? 1 : 0, (Math.log1p(n) / Math.log1p(bmax)) * 30)} fill={causeColours['octet-timing']} />
        ))}
      </svg>
      <p className="font-mono text-xs">
        median {formatDuration(c.medianSeconds)} · spread (p1–p99) {c.spreadPercent.toFixed(1)} % · min {formatDuration(c.minSeconds)} · max {formatDuration(c.maxSeconds)}
      </p>
      <p className="text-xs text-muted">
        {c.stretched} stretched, {c.missing} missing, {c.extra} extra clock periods; {octetTiming.frames} frame{octetTiming.frames === 1 ? '' : 's'} with one inside.
      </p>
    </div>
  );
}
