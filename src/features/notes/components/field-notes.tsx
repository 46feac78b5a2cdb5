import { useMemo, useState, type FormEvent } from 'react';
import { fieldNoteInputSchema, type Note } from '../../../../shared/schemas';
import { Button } from '../../../components/button';
import { TextArea } from '../../../components/field';
import { ErrorNotice } from '../../../components/notice';
import { useUnsavedChanges } from '../../../components/unsaved-changes';
import { parseWith, serverFieldErrors, type FieldErrors } from '../../../lib/form';
import { NoteCard } from './note-item';
import { groupByFieldPath, useCreateFieldNote, useDeleteFieldNote, useFieldNotes, useUpdateFieldNote } from '../api/field-notes';

interface FieldNotesProps {
  rigId: number;
  mapId: number;
  /** "layout id.field id" */
  fieldPath: string;
}

/** A field's "Notes (n)" toggle; open, it lists the field's notes and a form to add one. */
export function FieldNotes({ rigId, mapId, fieldPath }: FieldNotesProps) {
  const all = useFieldNotes(rigId, mapId);
  const byPath = useMemo(() => groupByFieldPath(all.data ?? []), [all.data]);
  const notes = byPath.get(fieldPath) ?? [];
  const [open, setOpen] = useState(false);
  const panelId = `field-notes-${fieldPath.replace(/[^A-Za-z0-9_-]/g, '_')}`;

  return (
    <div className="text-sm">
      <Button variant="ghost" className="px-2 py-0.5 text-xs" aria-expanded={open} aria-controls={panelId} onClick={() => setOpen(!open)}>
        Notes ({all.data ? notes.length : '…'})
      </Button>
      {open ? (
        <section id={panelId} aria-label={`Notes on ${fieldPath}`} className="mt-1 space-y-2 rounded border border-line p-3">
          {all.error ? <ErrorNotice error={all.error} /> : null}
          {notes.length === 0 ? (
            <p className="text-sm text-muted">No notes on this field yet.</p>
          ) : (
            <ul aria-label="Notes">
              {notes.map((n) => (
                <FieldNoteItem key={n.id} rigId={rigId} mapId={mapId} note={n} />
              ))}
            </ul>
          )}
          <AddFieldNote rigId={rigId} mapId={mapId} fieldPath={fieldPath} />
        </section>
      ) : null}
    </div>
  );
}

function AddFieldNote({ rigId, mapId, fieldPath }: FieldNotesProps) {
  const create = useCreateFieldNote(rigId, mapId);
  const [body, setBody] = useState('');
  const [errors, setErrors] = useState<FieldErrors>({});
  const server = serverFieldErrors(create.error);
  const shown = { ...server, ...errors };
  useUnsavedChanges(body.trim() !== '', `your note on ${fieldPath}`);

  function submit(e: FormEvent) {
    e.preventDefault();
    const parsed = parseWith(fieldNoteInputSchema, { target: { kind: 'field', fieldMapId: mapId, fieldPath }, body });
    if (!parsed.ok) return setErrors(parsed.errors);
    setErrors({});
    create.mutate(parsed.data, { onSuccess: () => setBody('') });
  }

  return (
    <form onSubmit={submit} className="space-y-2" aria-label={`Add a note on ${fieldPath}`} noValidate>
      <TextArea label="New note" rows={2} maxLength={4000} value={body} onChange={(e) => setBody(e.target.value)} error={shown.body} />
      {/* the field's id may exist only in an unsaved draft: the server names the path it rejected */}
      {shown['target.fieldPath'] ? <p className="text-xs text-danger">{shown['target.fieldPath']}</p> : null}
      {create.error && Object.keys(server).length === 0 ? <ErrorNotice error={create.error} /> : null}
      <Button type="submit" className="px-2 py-1 text-xs" busy={create.isPending}>
        Add note
      </Button>
    </form>
  );
}

/** One field note: author, time and text, in the editor's compact form. */
function FieldNoteItem({ rigId, mapId, note }: { rigId: number; mapId: number; note: Note }) {
  const update = useUpdateFieldNote(rigId, mapId);
  const remove = useDeleteFieldNote(rigId, mapId);
  return <NoteCard note={note} actions={{ update, remove }} testId="field-note" compact />;
}
