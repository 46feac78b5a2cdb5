import { queryOptions, useMutation, useQuery, useQueryClient } from '@tanstack/react-query';
import type { FieldNoteInput, Note } from '../../../../shared/schemas';
import { api } from '../../../lib/api';
import { fieldNotesKeys, fieldNotesPath } from './notes-keys';

// One query holds every note of the map; each field's list and count is a slice of it, so the
// editor makes one request however many fields it shows.

export function fetchFieldNotes(rigId: number, mapId: number): Promise<Note[]> {
  return api(fieldNotesPath(rigId, mapId));
}

export function fieldNotesQueryOptions(rigId: number, mapId: number) {
  return queryOptions({ queryKey: fieldNotesKeys.map(rigId, mapId), queryFn: () => fetchFieldNotes(rigId, mapId) });
}

export function useFieldNotes(rigId: number, mapId: number) {
  return useQuery(fieldNotesQueryOptions(rigId, mapId));
}

/** Notes by "layout id.field id", oldest first as the server sends them. */
export function groupByFieldPath(notes: Note[]): Map<string, Note[]> {
  const out = new Map<string, Note[]>();
  for (const n of notes) {
    const path = n.target.fieldPath;
    if (path === null) continue;
    const list = out.get(path);
    if (list) list.push(n);
    else out.set(path, [n]);
  }
  return out;
}

export function createFieldNote(rigId: number, mapId: number, input: FieldNoteInput): Promise<Note> {
  return api(fieldNotesPath(rigId, mapId), { method: 'POST', body: input });
}

export function updateFieldNote(rigId: number, mapId: number, noteId: number, body: string): Promise<Note> {
  return api(`${fieldNotesPath(rigId, mapId)}/${noteId}`, { method: 'PATCH', body: { body } });
}

export function deleteFieldNote(rigId: number, mapId: number, noteId: number): Promise<void> {
  return api(`${fieldNotesPath(rigId, mapId)}/${noteId}`, { method: 'DELETE' });
}

function useRefreshFieldNotes(rigId: number, mapId: number) {
  const queryClient = useQueryClient();
  return () => queryClient.invalidateQueries({ queryKey: fieldNotesKeys.map(rigId, mapId) });
}

export function useCreateFieldNote(rigId: number, mapId: number) {
  const refresh = useRefreshFieldNotes(rigId, mapId);
  return useMutation({ mutationFn: (input: FieldNoteInput) => createFieldNote(rigId, mapId, input), onSuccess: refresh });
}

export function useUpdateFieldNote(rigId: number, mapId: number) {
  const refresh = useRefreshFieldNotes(rigId, mapId);
  return useMutation({
    mutationFn: ({ noteId, body }: { noteId: number; body: string }) => updateFieldNote(rigId, mapId, noteId, body),
    onSuccess: refresh,
  });
}

export function useDeleteFieldNote(rigId: number, mapId: number) {
  const refresh = useRefreshFieldNotes(rigId, mapId);
  return useMutation({ mutationFn: (noteId: number) => deleteFieldNote(rigId, mapId, noteId), onSuccess: refresh });
}
