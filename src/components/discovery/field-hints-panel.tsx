import { useState, type ReactNode } from 'react';
import { useQuery } from '@tanstack/react-query';
import { Link } from 'react-router';
import type { RigDetail } from '../../../shared/schemas';
import { decodedNewestFirst, previewCapturesQueryOptions } from '../../lib/preview-frame';
import { useFieldHints } from './get-field-hints';
import { GroupCard } from '../../features/discovery/components/field-hints-view';
import { captureScope } from '../../lib/scope';

/** The field-map editor's hints panel: the hints of the preview capture (or the newest decoded one), one group at a time. */
export function FieldHintsPanel({ rig, captureId }: { rig: RigDetail; captureId: number | null }) {
  const captures = useQuery(previewCapturesQueryOptions(rig.id));
  const decoded = decodedNewestFirst(captures.data ?? []);
  const capture = decoded.find((c) => c.id === captureId) ?? decoded[0] ?? null;
  const hints = useFieldHints(rig.id, capture?.id ?? 0, 0, capture !== null);
  if (!capture) return <p className="text-sm text-muted">No decoded capture on this rig yet: field hints are counted over a capture's frames.</p>;
  const base = captureScope(rig.id, capture.id).page;
  const frameLink = (ref: { link: string; seq: number }) => {
    const id = hints.data?.frameIds[`${ref.link}:${ref.seq}`];
    return id === undefined ? null : `${base}/frames/${id}`;
  };
  return (
    <div className="space-y-2 text-sm" aria-label="Field hints">
      <p className="text-muted">
        Hints of <strong className="text-text">{capture.name}</strong>, split by the first information octet.{' '}
        <Link to={`${base}/field-hints`} className="text-link hover:underline">
          Open the full view (another selector, a map started from them)
        </Link>
      </p>
      {hints.isPending ? <p className="text-muted">Counting…</p> : null}
      {hints.error ? <p className="text-danger">{hints.error.message}</p> : null}
      {hints.data
        ? hints.data.report.groups.map((g) => (
            <Group
              key={`${g.direction}:${g.selector ?? 'all'}`}
              summary={
                <>
                  {g.direction === 'request' ? 'Requests' : 'Answers'}
                  {g.selector === null ? ', every frame' : `, selector 0x${g.selector.toString(16).toUpperCase().padStart(2, '0')}`} · {g.frames} frames · {g.hints.length} hints
                </>
              }
            >
              <GroupCard g={g} frameLink={frameLink} />
            </Group>
          ))
        : null}
    </div>
  );
}

/** One group, closed at first: its card (a table per group, many on a large capture) is built when opened. */
function Group({ summary, children }: { summary: ReactNode; children: ReactNode }) {
  const [open, setOpen] = useState(false);
  return (
    <details onToggle={(e) => setOpen(e.currentTarget.open)}>
      <summary className="cursor-pointer">{summary}</summary>
      {open ? children : null}
    </details>
  );
}
