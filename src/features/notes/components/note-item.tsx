import { useState } from 'react';
import { Link } from 'react-router';
import type { Note } from '../../../../shared/schemas';
import { Button } from '../../../components/button';
import { TextArea } from '../../../components/field';
import { ErrorNotice } from '../../../components/notice';
import { formatDateTime } from '../../../lib/format';
import { serverFieldErrors } from '../../../lib/form';
import { useDeleteNote } from '../api/delete-note';
import { useUpdateNote } from '../api/update-note';

/** "bytes 2–3 of frame 14 on rx", "frame 14 on rx", "the capture" */
export function pinLabel(note: Note): string {
  const t = note.target;
  const frame = `frame ${t.seq} on ${t.link}`;
  if (t.kind === 'bytes') return t.byteStart === t.byteEnd ? `byte ${t.byteStart} of ${frame}` : `bytes ${t.byteStart}–${t.byteEnd} of ${frame}`;
  if (t.kind === 'frame') return frame;
  if (t.kind === 'field') return `field ${t.fieldPath ?? ''}`;
  return 'the capture';
}

/** One note: author, time, where it is pinned, its text; edit and delete where the caller may. */
export function NoteItem({ rigId, captureId, note, linkFrame = false }: { rigId: number; captureId: number; note: Note; linkFrame?: boolean }) {
  const [editing, setEditing] = useState(false);
  const [draft, setDraft] = useState(note.body);
  const update = useUpdateNote(rigId, captureId);
  const remove = useDeleteNote(rigId, captureId);
  const edited = note.updatedAt !== note.createdAt;
  const frameLink = linkFrame && note.target.frameId !== null ? `/rigs/${rigId}/captures/${captureId}/frames/${note.target.frameId}` : null;

  function save() {
    update.mutate({ noteId: note.id, body: draft }, { onSuccess: () => setEditing(false) });
  }

  return (
    <li className="space-y-1.5 border-b border-line py-3 last:border-b-0" data-testid="note">
      <div className="flex flex-wrap items-baseline gap-x-2 gap-y-1 text-xs text-muted">
        <span className="font-medium text-text">{note.author?.name ?? 'A former member'}</span>
        <time dateTime={note.createdAt}>{formatDateTime(note.createdAt)}</time>
        {edited ? <span>(edited {formatDateTime(note.updatedAt)})</span> : null}
        <span>·</span>
        {frameLink ? (
          <Link to={frameLink} className="text-link hover:underline">
            {pinLabel(note)}
          </Link>
        ) : (
          <span data-testid="note-pin">{pinLabel(note)}</span>
        )}
        {note.target.kind !== 'capture' && note.target.frameId === null ? <span>(not in the current decode)</span> : null}
      </div>
      {editing ? (
        <div className="space-y-2">
          <TextArea label="Edit note" rows={3} value={draft} onChange={(e) => setDraft(e.target.value)} maxLength={4000} error={serverFieldErrors(update.error).body} />
          <div className="flex gap-2">
            <Button onClick={save} busy={update.isPending}>
              Save
            </Button>
            <Button
              variant="secondary"
              onClick={() => {
                setEditing(false);
                setDraft(note.body);
                update.reset();
              }}
            >
              Cancel
            </Button>
          </div>
        </div>
      ) : (
        <p className="whitespace-pre-wrap text-sm text-text">{note.body}</p>
      )}
      {!editing && (note.canEdit || note.canDelete) ? (
        <div className="flex gap-1">
          {note.canEdit ? (
            <Button variant="ghost" className="px-2 py-0.5 text-xs" onClick={() => setEditing(true)}>
              Edit
            </Button>
          ) : null}
          {note.canDelete ? (
            <Button
              variant="dangerGhost"
              className="px-2 py-0.5 text-xs"
              busy={remove.isPending}
              onClick={() => {
                if (window.confirm('Delete this note?')) remove.mutate(note.id);
              }}
            >
              Delete
            </Button>
          ) : null}
        </div>
      ) : null}
      {update.error && !serverFieldErrors(update.error).body ? <ErrorNotice error={update.error} /> : null}
      {remove.error ? <ErrorNotice error={remove.error} /> : null}
    </li>
  );
}
