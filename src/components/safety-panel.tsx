import { Link } from 'react-router';

/** Cautions for clipping a logic analyzer onto old serial hardware; shown beside the upload and roles form. */
export function SafetyPanel() {
  return (
    <aside aria-labelledby="probing-safety" className="rounded-lg border border-flare-500/50 bg-flare-100/60 p-4 text-sm dark:bg-flare-500/8">
      <h2 id="probing-safety" className="mb-2 flex items-center gap-2 font-semibold text-flare-700 dark:text-flare-300">
        <span aria-hidden>⚠</span> Probing safely
      </h2>
      <ul className="list-disc space-y-2 pl-4 text-text/90">
        <li>
          Most logic analyzer inputs take only a few volts. RS-232 lines swing to about <strong>±12 V</strong> and can destroy them: probe the
          TTL side of the line driver and receiver chips, or use a level shifter, a resistive divider, or a probe rated for those levels.
        </li>
        <li>
          Terminals and machines of the era often have <strong>mains-powered linear supplies</strong> with exposed live parts. Keep the case
          closed where you can, and unplug before clipping on.
        </li>
        <li>
          Old terminals and monitors hold <strong>CRT high voltage</strong> that keeps a dangerous charge long after power-off. Do not reach
          into them.
        </li>
        <li>
          Connect the analyzer's ground to the board's ground before any signal lead. Machines on different outlets can sit at different
          earth potentials; an <strong>earth loop</strong> through the probe ground can carry large currents.
        </li>
        <li>Follow your local electrical codes, and ask someone qualified when in doubt.</li>
      </ul>
    </aside>
  );
}

/** The route that shows the whole panel on a page of its own (linked from the short cautions). */
export const SAFETY_PAGE = '/probing-safety';

/**
 * The short form, where the app sends someone back to live hardware (e.g. after a bad FCS):
 * the three dangers in one breath and a link to the whole panel.
 */
export function ProbingCautions({ className = '' }: { className?: string }) {
  return (
    <p role="note" aria-label="Probing cautions" className={`rounded-md border border-flare-500/50 bg-flare-100/60 px-3 py-2 text-xs dark:bg-flare-500/8 ${className}`}>
      <span aria-hidden>⚠ </span>
      <strong>Before you probe again:</strong> RS-232 lines swing to ±12 V and can destroy a 3.3 V analyzer input (probe the TTL side or use a level
      shifter); mains-powered supplies and CRT high voltage can kill, even after power-off. Clip the ground on first, and follow your local codes; ask
      someone qualified when in doubt.{' '}
      <Link to={SAFETY_PAGE} className="font-medium text-link hover:underline">
        Probing safely, in full →
      </Link>
    </p>
  );
}
