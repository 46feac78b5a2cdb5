import { useCallback, useState, type FormEvent } from 'react';
import { noteInputSchema, type NoteInput } from '../../../../shared/schemas';
import { Button } from '../../../components/button';
import { Card, CardTitle } from '../../../components/card';
import { SelectField, TextArea, TextField } from '../../../components/field';
import { ErrorNotice } from '../../../components/notice';
import { useUnsavedChanges } from '../../../components/unsaved-changes';
import { parseWith, serverFieldErrors, type FieldErrors } from '../../../lib/form';
import { useCreateNote } from '../api/create-note';
import { useNotes } from '../api/get-notes';
import { useHexSelection } from './hex-selection';
import { NoteList } from './note-list';

type Pin = 'frame' | 'bytes';

/** The inspector's notes: those pinned to this frame or to bytes of it, and a form to add one. */
export function FrameNotes({ rigId, captureId, frameId, octetCount }: { rigId: number; captureId: number; frameId: number; octetCount: number }) {
  const notes = useNotes(rigId, captureId, { frameId });
  const create = useCreateNote(rigId, captureId);
  const [pin, setPin] = useState<Pin>('frame');
  const [body, setBody] = useState('');
  const [byteStart, setByteStart] = useState('0');
  const [byteEnd, setByteEnd] = useState('0');
  const [errors, setErrors] = useState<FieldErrors>({});
  const shown = { ...serverFieldErrors(create.error), ...errors };
  useUnsavedChanges(body.trim() !== '', 'your note on this frame');
  const [fromSelection, setFromSelection] = useState(false);
  useHexSelection(
    useCallback(([first, last]: [number, number]) => {
      setPin('bytes');
      setByteStart(String(first));
      setByteEnd(String(last));
      setFromSelection(true);
    }, []),
  );

  function submit(e: FormEvent) {
    e.preventDefault();
    const target =
      pin === 'frame'
        ? { kind: 'frame' as const, frameId }
        : { kind: 'bytes' as const, frameId, byteStart: byteStart === '' ? NaN : Number(byteStart), byteEnd: byteEnd === '' ? NaN : Number(byteEnd) };
    const parsed = parseWith(noteInputSchema, { target, body });
    if (!parsed.ok) return setErrors(parsed.errors);
    if (target.kind === 'bytes' && target.byteEnd >= octetCount) return setErrors({ 'target.byteEnd': `The frame has ${octetCount} bytes (0–${octetCount - 1})` });
    setErrors({});
    create.mutate(parsed.data as NoteInput, { onSuccess: () => setBody('') });
  }

  return (
    <Card>
      <CardTitle aside={<span className="text-xs text-muted">{notes.data ? `${notes.data.length} on this frame` : ''}</span>}>Notes</CardTitle>
      {notes.error ? <ErrorNotice error={notes.error} /> : null}
      {notes.data ? <NoteList rigId={rigId} captureId={captureId} notes={notes.data} empty="No notes on this frame yet." /> : null}
      <form onSubmit={submit} className="mt-4 space-y-3" aria-label="Add a note" noValidate>
        <div className="flex flex-wrap items-end gap-3">
          <SelectField
            label="Pin to"
            value={pin}
            onChange={(e) => setPin(e.target.value as Pin)}
            options={[
              { value: 'frame', label: 'The whole frame' },
              { value: 'bytes', label: 'A byte range' },
            ]}
            wrapperClassName="w-44"
          />
          {pin === 'bytes' ? (
            <>
              <TextField label="First byte" type="number" min={0} max={octetCount - 1} value={byteStart} onChange={(e) => {
                  setByteStart(e.target.value);
                  setFromSelection(false);
                }} error={shown['target.byteStart']} wrapperClassName="w-28" />
              <TextField label="Last byte" type="number" min={0} max={octetCount - 1} value={byteEnd} onChange={(e) => {
                  setByteEnd(e.target.value);
                  setFromSelection(false);
                }} error={shown['target.byteEnd']} wrapperClassName="w-28" />
              <p className="pb-2 text-xs text-muted">
                {fromSelection ? 'From your selection in the hex view. ' : 'Select octets in the hex view, or type '}offsets 0–{octetCount - 1}.
              </p>
            </>
          ) : null}
        </div>
        <TextArea label="Note" rows={3} maxLength={4000} value={body} onChange={(e) => setBody(e.target.value)} error={shown.body} />
        {create.error && Object.keys(serverFieldErrors(create.error)).length === 0 ? <ErrorNotice error={create.error} /> : null}
        <Button type="submit" busy={create.isPending}>
          Add note
        </Button>
      </form>
    </Card>
  );
}
