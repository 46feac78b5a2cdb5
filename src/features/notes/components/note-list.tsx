import type { Note } from '../../../../shared/schemas';
import { NoteItem } from './note-item';

export function NoteList({ rigId, captureId, notes, empty, linkFrames = false }: { rigId: number; captureId: number; notes: Note[]; empty: string; linkFrames?: boolean }) {
  if (notes.length === 0) return <p className="text-sm text-muted">{empty}</p>;
  return (
    <ul aria-label="Notes">
      {notes.map((n) => (
        <NoteItem key={n.id} rigId={rigId} captureId={captureId} note={n} linkFrame={linkFrames} />
      ))}
    </ul>
  );
}
