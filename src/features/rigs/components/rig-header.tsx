import { NavLink } from 'react-router';
import { RoleBadge } from '../../../components/role-badge';
import { formatLineSettings } from '../../../lib/format';
import { useRig } from '../api/get-rig';

const roleNotes = {
  owner: 'You own this rig: you can change everything and manage its people.',
  analyst: 'You are an analyst on this rig.',
  viewer: 'You are a viewer on this rig: you can read everything but not change it.',
} as const;

export function RigHeader({ rigId }: { rigId: number }) {
  const rig = useRig(rigId);
  const tab = ({ isActive }: { isActive: boolean }) =>
    `-mb-px border-b-2 px-3 py-2 text-sm font-medium ${
      isActive ? 'border-flare-500 text-text' : 'border-transparent text-muted hover:text-text'
    }`;
  return (
    <header className="space-y-3">
      <div className="flex flex-wrap items-start justify-between gap-3">
        <div>
          <h1 className="text-xl font-semibold">{rig.name}</h1>
          {rig.description ? <p className="mt-0.5 max-w-3xl text-sm text-muted">{rig.description}</p> : null}
        </div>
        <div className="text-right">
          <RoleBadge role={rig.myRole} />
          <p className="mt-1 font-mono text-xs text-muted">{formatLineSettings(rig.lineSettings)}</p>
        </div>
      </div>
      <p className="text-xs text-muted">{roleNotes[rig.myRole]}</p>
      <nav aria-label="Rig sections" className="flex gap-1 border-b border-line">
        <NavLink to={`/rigs/${rigId}`} end className={tab}>
          Stations
        </NavLink>
        <NavLink to={`/rigs/${rigId}/captures`} className={tab}>
          Captures
        </NavLink>
        <NavLink to={`/rigs/${rigId}/settings`} className={tab}>
          Line settings
        </NavLink>
        <NavLink to={`/rigs/${rigId}/members`} className={tab}>
          Members
        </NavLink>
        <NavLink to={`/rigs/${rigId}/field-maps`} className={tab}>
          Field maps
        </NavLink>
      </nav>
    </header>
  );
}
