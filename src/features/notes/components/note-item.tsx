import { useState, type ReactNode } from 'react';
import { Link } from 'react-router';
import type { Note } from '../../../../shared/schemas';
import { Button } from '../../../components/button';
import { TextArea } from '../../../components/field';
import { ErrorNotice } from '../../../components/notice';
import { useUnsavedChanges } from '../../../components/unsaved-changes';
import { formatDateTime } from '../../../lib/format';
import { serverFieldErrors } from '../../../lib/form';
import { useDeleteNote } from '../api/delete-note';
import { useUpdateNote } from '../api/update-note';
import { captureScope } from '../../../lib/scope';

/** "bytes 2–3 of frame 14 on rx", "frame 14 on rx", "the capture" */
export function pinLabel(note: Note): string {
  const t = note.target;
  const frame = `frame ${t.seq} on ${t.link}`;
  if (t.kind === 'bytes') return t.byteStart === t.byteEnd ? `byte ${t.byteStart} of ${frame}` : `bytes ${t.byteStart}–${t.byteEnd} of ${frame}`;
  if (t.kind === 'frame') return frame;
  if (t.kind === 'field') return `field ${t.fieldPath ?? ''}`;
  return 'the capture';
}

/** The edit and delete calls a note list uses; capture notes and field notes each have their own. */
export interface NoteActions {
  update: { mutate(v: { noteId: number; body: string }, o?: { onSuccess?: () => void }): void; isPending: boolean; error: unknown; reset(): void };
  remove: { mutate(noteId: number): void; isPending: boolean; error: unknown };
}

/**
 * One note as every list shows it: author, time, an optional pin, its text, and edit and delete
 * as the server's canEdit / canDelete allow. `compact` is the denser form used inside the
 * field-map editor.
 */
export function NoteCard({
  note,
  actions,
  pin,
  testId,
  compact = false,
}: {
  note: Note;
  actions: NoteActions;
  pin?: ReactNode;
  testId: string;
  compact?: boolean;
}) {
  const { update, remove } = actions;
  const [editing, setEditing] = useState(false);
  const [draft, setDraft] = useState(note.body);
  const edited = note.updatedAt !== note.createdAt;
  useUnsavedChanges(editing && draft !== note.body, 'your edit of a note');
  const editButton = compact ? 'px-2 py-1 text-xs' : '';

  return (
    <li className={`${compact ? 'space-y-1 py-2' : 'space-y-1.5 py-3'} border-b border-line last:border-b-0`} data-testid={testId}>
      <div className={`flex flex-wrap items-baseline gap-x-2 ${compact ? '' : 'gap-y-1'} text-xs text-muted`}>
        <span className="font-medium text-text">{note.author?.name ?? 'A former member'}</span>
        <time dateTime={note.createdAt}>{formatDateTime(note.createdAt)}</time>
        {edited ? <span>(edited {formatDateTime(note.updatedAt)})</span> : null}
        {pin}
      </div>
      {editing ? (
        <div className="space-y-2">
          <TextArea
            label="Edit note"
            rows={compact ? 2 : 3}
            value={draft}
            onChange={(e) => setDraft(e.target.value)}
            maxLength={4000}
            error={serverFieldErrors(update.error).body}
          />
          <div className="flex gap-2">
            <Button className={editButton} busy={update.isPending} onClick={() => update.mutate({ noteId: note.id, body: draft }, { onSuccess: () => setEditing(false) })}>
              Save
            </Button>
            <Button
              variant="secondary"
              className={editButton}
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

/** A capture note: its pin (linking to the frame where asked) beside author and time. */
export function NoteItem({ rigId, captureId, note, linkFrame = false }: { rigId: number; captureId: number; note: Note; linkFrame?: boolean }) {
  const update = useUpdateNote(rigId, captureId);
  const remove = useDeleteNote(rigId, captureId);
  const frameLink = linkFrame && note.target.frameId !== null ? `${captureScope(rigId, captureId).page}/frames/${note.target.frameId}` : null;
  const pin = (
    <>
      <span>·</span>
      {frameLink ? (
        <Link to={frameLink} className="text-link hover:underline">
          {pinLabel(note)}
        </Link>
      ) : (
        <span data-testid="note-pin">{pinLabel(note)}</span>
      )}
      {note.target.kind !== 'capture' && note.target.frameId === null ? <span>(not in the current decode)</span> : null}
    </>
  );
  return <NoteCard note={note} actions={{ update, remove }} pin={pin} testId="note" />;
}
