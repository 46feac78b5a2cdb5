import { Link } from 'react-router';
import { ButtonLink } from '../../../components/button';
import { RoleBadge } from '../../../components/role-badge';
import { formatLineSettings } from '../../../lib/format';
import { useRigs } from '../api/get-rigs';

export function RigList() {
  const rigs = useRigs();
  return (
    <div className="space-y-5">
      <div className="flex items-end justify-between gap-4">
        <div>
          <h1 className="text-xl font-semibold">Your rigs</h1>
          <p className="text-sm text-muted">Each rig is one network under study: its line settings, stations and people.</p>
        </div>
        <ButtonLink to="/rigs/new">New rig</ButtonLink>
      </div>
      {rigs.length === 0 ? (
        <div className="rounded-lg border border-dashed border-line p-10 text-center text-muted">
          <p>You are not a member of any rig yet.</p>
          <p className="mt-1 text-sm">Create one for the network you are restoring, or ask a rig owner for an invitation.</p>
        </div>
      ) : (
        <ul className="grid gap-3 md:grid-cols-2">
          {rigs.map((rig) => (
            <li key={rig.id}>
              <Link
                to={`/rigs/${rig.id}`}
                className="group block h-full rounded-lg border border-line bg-surface p-4 shadow-sm transition-colors hover:border-flare-500/70"
              >
                <div className="flex items-start justify-between gap-3">
                  <h2 className="font-semibold group-hover:text-link">{rig.name}</h2>
                  <RoleBadge role={rig.myRole} />
                </div>
                {rig.description ? <p className="mt-1 line-clamp-2 text-sm text-muted">{rig.description}</p> : null}
                <p className="mt-3 font-mono text-xs text-muted">{formatLineSettings(rig.lineSettings)}</p>
                <p className="mt-1 text-xs text-muted">
                  {rig.stationCount} {rig.stationCount === 1 ? 'station' : 'stations'} · {rig.memberCount}{' '}
                  {rig.memberCount === 1 ? 'member' : 'members'}
                </p>
              </Link>
            </li>
          ))}
        </ul>
      )}
    </div>
  );
}
