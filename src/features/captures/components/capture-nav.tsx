import { Link, NavLink } from 'react-router';
import type { CaptureSummaryRow } from '../../../../shared/schemas';
import { captureScope } from '../../../lib/scope';

/** The capture's title bar and its views. */
export function CaptureNav({ rigId, capture }: { rigId: number; capture: CaptureSummaryRow }) {
  const base = `${captureScope(rigId, capture.id).page}`;
  const tab = ({ isActive }: { isActive: boolean }) =>
    `-mb-px border-b-2 px-3 py-1.5 text-sm font-medium ${isActive ? 'border-flare-500 text-text' : 'border-transparent text-muted hover:text-text'}`;
  return (
    <header className="space-y-2">
      <p className="text-xs text-muted">
        <Link to={`/rigs/${rigId}/captures`} className="text-link hover:underline">
          Captures
        </Link>{' '}
        /
      </p>
      <h1 className="truncate text-lg font-semibold">{capture.name}</h1>
      <nav aria-label="Capture views" className="flex gap-1 border-b border-line">
        <NavLink to={base} end className={tab}>
          Overview
        </NavLink>
        <NavLink to={`${base}/timeline`} className={tab}>
          Timeline
        </NavLink>
        <NavLink to={`${base}/faults`} className={tab}>
          Fault desk
        </NavLink>
        <NavLink to={`${base}/schedule`} className={tab}>
          Schedule
        </NavLink>
        <NavLink to={`${base}/files`} className={tab}>
          Recovered files
        </NavLink>
        <NavLink to={`${base}/compare`} className={tab}>
          Compare
        </NavLink>
        <NavLink to={`${base}/field-hints`} className={tab}>
          Field hints
        </NavLink>
        <NavLink to={`${base}/notes`} className={tab}>
          Notes
        </NavLink>
        <NavLink to={`${base}/setup`} className={tab}>
          Channel roles
        </NavLink>
      </nav>
    </header>
  );
}
