import { useState, type FormEvent } from 'react';
import { useSearchParams } from 'react-router';
import { noteInputSchema } from '../../../../shared/schemas';
import { Button } from '../../../components/button';
import { Card, CardTitle } from '../../../components/card';
import { TextArea, TextField } from '../../../components/field';
import { ErrorNotice } from '../../../components/notice';
import { useUnsavedChanges } from '../../../components/unsaved-changes';
import { parseWith, serverFieldErrors, type FieldErrors } from '../../../lib/form';
import { useCreateNote } from '../api/create-note';
import { useNotes } from '../api/get-notes';
import { NoteList } from './note-list';

/** Every note of a capture, searchable by text (kept in ?q=), and a form for a note on the whole capture. */
export function CaptureNotes({ rigId, captureId }: { rigId: number; captureId: number }) {
  const [params, setParams] = useSearchParams();
  const q = params.get('q') ?? '';
  const [search, setSearch] = useState(q);
  const notes = useNotes(rigId, captureId, q ? { q } : {});
  const create = useCreateNote(rigId, captureId);
  const [body, setBody] = useState('');
  const [errors, setErrors] = useState<FieldErrors>({});
  useUnsavedChanges(body.trim() !== '', 'your note on the capture');

  function find(e: FormEvent) {
    e.preventDefault();
    setParams(search.trim() ? { q: search.trim() } : {}, { replace: true });
  }

  function add(e: FormEvent) {
    e.preventDefault();
    const parsed = parseWith(noteInputSchema, { target: { kind: 'capture' }, body });
    if (!parsed.ok) return setErrors(parsed.errors);
    setErrors({});
    create.mutate(parsed.data, { onSuccess: () => setBody('') });
  }

  return (
    <div className="space-y-4">
      <Card>
        <CardTitle aside={<span className="text-xs text-muted">{notes.data ? `${notes.data.length} ${q ? 'found' : 'in all'}` : ''}</span>}>Notes on this capture</CardTitle>
        <form onSubmit={find} role="search" className="mb-3 flex items-end gap-2">
          <TextField label="Find in notes" type="search" value={search} onChange={(e) => setSearch(e.target.value)} wrapperClassName="w-72" />
          <Button type="submit" variant="secondary">
            Find
          </Button>
        </form>
        {notes.error ? <ErrorNotice error={notes.error} /> : null}
        {notes.isPending ? <p className="text-sm text-muted">Reading the notes…</p> : null}
        {notes.data ? <span hidden data-testid="notes-ready" /> : null}
        {notes.data ? (
          <NoteList rigId={rigId} captureId={captureId} notes={notes.data} linkFrames empty={q ? `No note mentions “${q}”.` : 'No notes yet. Pin one to a frame from the inspector, or add one to the capture below.'} />
        ) : null}
      </Card>
      <Card>
        <CardTitle>Add a note to the capture</CardTitle>
        <form onSubmit={add} className="space-y-3" noValidate>
          <TextArea label="Note" rows={3} maxLength={4000} value={body} onChange={(e) => setBody(e.target.value)} error={errors.body ?? serverFieldErrors(create.error).body} />
          {create.error && !serverFieldErrors(create.error).body ? <ErrorNotice error={create.error} /> : null}
          <Button type="submit" busy={create.isPending}>
            Add note
          </Button>
        </form>
      </Card>
    </div>
  );
}
