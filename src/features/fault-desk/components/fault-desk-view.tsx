import { Link } from 'react-router';
import type { DamageCauseName, FaultDeskView as Desk } from '../../../../shared/schemas';
import { Card, CardTitle } from '../../../components/card';
import { formatSeconds } from '../../../components/units';
import { anomalyLabels, causeLabels } from './cause-labels';
import { FaultGroups } from './fault-groups';
import { FaultStrip } from './fault-strip';
import { FaultTable } from './fault-table';
import { RacePanel } from './race-panel';

interface Props {
  desk: Desk;
  cause: DamageCauseName | null;
  hrefFor: (cause: DamageCauseName | null, offset?: number) => string;
  frameHref: (frameId: number) => string;
  rigSettingsHref: string;
}

/** Screen 7: every damaged frame grouped by cause, damage over time, and the rows to open. */
export function FaultDeskView({ desk, cause, hrefFor, frameHref, rigSettingsHref }: Props) {
  const from = desk.total === 0 ? 0 : desk.offset + 1;
  const to = desk.offset + desk.rows.length;
  return (
    <div className="space-y-4">
      <Card>
        <CardTitle aside={<span className="text-xs text-muted">{desk.framesSeen} frames decoded</span>}>Damage by cause</CardTitle>
        <FaultGroups desk={desk} chosen={cause} hrefFor={(c) => hrefFor(c)} />
      </Card>
      <RacePanel desk={desk} hrefFor={(c) => hrefFor(c)} rigSettingsHref={rigSettingsHref} />
      {desk.bins ? (
        <Card>
          <CardTitle>Damage over time</CardTitle>
          <FaultStrip bins={desk.bins} />
        </Card>
      ) : null}
      <Card>
        <CardTitle
          aside={
            <span className="flex items-center gap-2 text-xs text-muted">
              {from}–{to} of {desk.total}
              {desk.offset > 0 ? (
                <Link to={hrefFor(cause, Math.max(0, desk.offset - desk.limit))} className="text-link hover:underline">
                  earlier
                </Link>
              ) : null}
              {to < desk.total ? (
                <Link to={hrefFor(cause, desk.offset + desk.limit)} className="text-link hover:underline">
                  later
                </Link>
              ) : null}
            </span>
          }
        >
          {cause ? causeLabels[cause] : 'All damaged frames'}
        </CardTitle>
        <FaultTable desk={desk} frameHref={frameHref} />
      </Card>
      {desk.outsideTotal > 0 ? (
        <Card>
          <CardTitle aside={<span className="text-xs text-muted">{desk.outsideTotal} in all</span>}>Line anomalies between frames</CardTitle>
          <ul className="space-y-0.5 font-mono text-xs">
            {desk.outside.map((a, i) => (
              <li key={i}>
                {formatSeconds(a.t)} {a.channel}: {anomalyLabels[a.kind]}
                {a.count > 1 ? ` (${a.count})` : ''}
              </li>
            ))}
          </ul>
        </Card>
      ) : null}
    </div>
  );
}
