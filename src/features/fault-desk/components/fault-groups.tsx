import { Link } from 'react-router';
import type { DamageCauseName, FaultDeskView } from '../../../../shared/schemas';
import { anomalyLabels, causeColours, causeLabels } from './cause-labels';

interface Props {
  desk: FaultDeskView;
  chosen: DamageCauseName | null;
  hrefFor: (cause: DamageCauseName | null) => string;
}

/** Damaged frames counted by cause (each one a filter), and the line anomalies by kind. */
export function FaultGroups({ desk, chosen, hrefFor }: Props) {
  const all = desk.groups.reduce((n, g) => n + g.count, 0);
  const item = (active: boolean) =>
    `flex items-center justify-between gap-3 rounded-md border px-3 py-1.5 text-sm ${active ? 'border-flare-500 bg-raised' : 'border-line hover:bg-raised'}`;
  return (
    <div className="grid gap-4 md:grid-cols-2">
      <nav aria-label="Fault groups">
        <ul className="space-y-1">
          <li>
            <Link to={hrefFor(null)} className={item(chosen === null)} aria-current={chosen === null ? 'page' : undefined}>
              <span>All damaged frames</span>
              <span className="font-mono">{all}</span>
            </Link>
          </li>
          {desk.groups.map((g) => (
            <li key={g.cause}>
              <Link to={hrefFor(g.cause)} className={item(chosen === g.cause)} aria-current={chosen === g.cause ? 'page' : undefined}>
                <span className="flex items-center gap-2">
                  <span aria-hidden className="inline-block size-2.5 rounded-sm" style={{ background: causeColours[g.cause] }} />
                  {causeLabels[g.cause]}
                </span>
                <span className="font-mono" data-testid={`group-count-${g.cause}`}>
                  {g.count}
                </span>
              </Link>
            </li>
          ))}
        </ul>
      </nav>
      <section aria-label="Line anomalies" className="text-sm">
        <h3 className="mb-1 font-medium">Line anomalies in the samples</h3>
        <table className="w-full">
          <thead className="text-left text-xs text-muted">
            <tr>
              <th className="font-normal">kind</th>
              <th className="text-right font-normal">in frames</th>
              <th className="text-right font-normal">between frames</th>
            </tr>
          </thead>
          <tbody>
            {desk.anomalyGroups.map((g) => (
              <tr key={g.kind}>
                <td>{anomalyLabels[g.kind]}</td>
                <td className="text-right font-mono">{g.inFrames}</td>
                <td className="text-right font-mono">{g.kind === 'silence' ? '—' : g.outside}</td>
              </tr>
            ))}
          </tbody>
        </table>
        {desk.anomaliesDropped > 0 ? <p className="mt-1 text-xs text-muted">{desk.anomaliesDropped} more anomalies were counted but not kept.</p> : null}
      </section>
    </div>
  );
}
