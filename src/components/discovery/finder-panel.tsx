import type { CaptureDiscovery, DiscoveryCandidate } from '../../../shared/schemas';
import { Button } from '../button';
import { ErrorNotice } from '../notice';
import { ProgressBar } from '../progress-bar';
import { formatBytes } from '../units';
import { formatAddress, plural } from '../../lib/format';
import { directionWords } from './direction-words';

interface Props {
  discovery: CaptureDiscovery | undefined;
  error: unknown;
  /** the candidate the form shows (null: the saved settings) */
  shownKey: string | null;
  disabled: boolean;
  onUse: (c: DiscoveryCandidate) => void;
}

/** The settings finder on the channel-roles page: progress, its choice with the evidence, the ranked alternatives, directions. */
export function FinderPanel({ discovery: d, error, shownKey, disabled, onUse }: Props) {
  if (error) return <ErrorNotice>The settings finder could not run: {error instanceof Error ? error.message : String(error)}. Fill in the settings below yourself.</ErrorNotice>;
  if (!d || d.state === 'running') {
    return (
      <div data-testid="finder-progress">
        <ProgressBar
          label="Finding the line settings"
          value={d && d.budget > 0 ? d.bytesRead / d.budget : null}
          detail={d ? `${formatBytes(d.bytesRead)} of at most ${formatBytes(d.budget)} read` : undefined}
        />
        <p className="mt-1 text-xs text-muted">Trial decodes of the head of the file under every plausible encoding, clock edge, inversion and check-sequence width.</p>
      </div>
    );
  }
  if (d.state === 'failed') return <ErrorNotice>The settings finder stopped: {d.error}. Fill in the settings below yourself.</ErrorNotice>;
  if (!d.found) return <NothingFound d={d} />;
  const best = d.candidates[0];
  return (
    <section className="space-y-3 rounded-md border border-line bg-raised/50 px-3 py-3 text-sm" aria-label="Settings found" data-testid="finder-result">
      <p>
        <strong>Settings found:</strong> {best.label}.{' '}
        <span className="text-muted">
          {plural(best.good, 'good frame')} of {best.frames} in {formatBytes(d.bytesRead)} read{best.rateText ? ` · ${best.rateText}` : ''}.
        </span>{' '}
        {shownKey === best.key ? 'They are filled in below; every field can still be changed.' : null}
      </p>
      <p className="font-mono text-xs text-muted" data-testid="finder-summary">{d.summary}</p>
      {shownKey !== best.key && !disabled ? (
        <Button variant="secondary" onClick={() => onUse(best)}>
          Fill in the settings found
        </Button>
      ) : null}
      <details>
        <summary className="cursor-pointer font-medium text-link">Other settings tried ({d.candidatesTried - 1}) and their evidence</summary>
        <ol className="mt-2 space-y-2" aria-label="Ranked settings">
          {d.candidates.map((c, i) => (
            <li key={c.key} className="flex flex-wrap items-start justify-between gap-2 border-b border-line/60 pb-2">
              <div className="min-w-0 flex-1">
                <p>
                  <span className="font-mono text-xs text-muted">{i + 1}.</span> {c.evidence}
                </p>
                {c.notes.map((n) => (
                  <p key={n} className="text-xs text-muted">
                    {n}
                  </p>
                ))}
              </div>
              {shownKey === c.key ? (
                <span className="text-xs text-muted">shown below</span>
              ) : !disabled ? (
                <Button variant="ghost" onClick={() => onUse(c)} aria-label={`Use ${c.label}`}>
                  Use this setting
                </Button>
              ) : null}
            </li>
          ))}
        </ol>
      </details>
      <Directions d={d} />
    </section>
  );
}

function Directions({ d }: { d: CaptureDiscovery }) {
  if (d.directions.length === 0) return null;
  return (
    <div>
      <h4 className="font-medium">Link directions{d.mapName ? <span className="font-normal text-muted"> (told with the field map “{d.mapName}”)</span> : null}</h4>
      <ul className="mt-1 space-y-1" aria-label="Inferred directions">
        {d.directions.map((v) => (
          <li key={v.link}>
            <span className="font-mono">{v.link}</span>: <strong>{directionWords[v.direction]}</strong>
            {v.station !== null ? ` (station ${formatAddress(v.station)})` : ''}
            {v.direction !== 'unknown' ? <span className="text-muted"> · confidence {Math.round(v.confidence * 100)} %</span> : null}
            <span className="block text-xs text-muted">{v.direction === 'unknown' ? `Could not be told: ${v.reasons.join(' ') || 'no frames with a good check sequence on this link.'}` : v.reasons[0]}</span>
          </li>
        ))}
      </ul>
      {d.roster.length > 0 ? (
        <p className="mt-2 text-xs text-muted">
          Stations seen: {d.roster.map((s) => `${formatAddress(s.address)} (${plural(s.frames, 'frame')} on ${s.links.map((l) => l.link).join(', ')})`).join('; ')}. Name them on the rig's Stations tab.
        </p>
      ) : null}
    </div>
  );
}

/** No setting gave a good frame: what was tried and what to check, never an empty page. */
export function NothingFound({ d }: { d: CaptureDiscovery }) {
  return (
    <div role="alert" className="space-y-2 rounded-md border border-danger/40 bg-danger-soft px-3 py-3 text-sm text-danger" data-testid="finder-nothing">
      <p className="font-medium">No setting gave a single frame with a good check sequence in the {formatBytes(d.bytesRead)} read.</p>
      <div>
        <p className="font-medium">Tried:</p>
        <ul className="list-disc pl-5">
          {d.tried.map((t) => (
            <li key={t}>{t}</li>
          ))}
        </ul>
      </div>
      <div>
        <p className="font-medium">What to check:</p>
        <ul className="list-disc pl-5">
          {d.advice.map((t) => (
            <li key={t}>{t}</li>
          ))}
        </ul>
      </div>
      {d.cautions.length ? (
        <ul className="list-disc pl-5 text-xs">
          {d.cautions.map((t) => (
            <li key={t}>{t}</li>
          ))}
        </ul>
      ) : null}
      <p className="text-xs">The settings below are the detection's guess; change them, or record again after checking the probes.</p>
    </div>
  );
}
