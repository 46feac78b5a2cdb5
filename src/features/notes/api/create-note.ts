import { useMutation, useQueryClient } from '@tanstack/react-query';
import type { Note, NoteInput } from '../../../../shared/schemas';
import { api } from '../../../lib/api';
import { notesKeys, notesPath } from './notes-keys';

export function createNote(rigId: number, captureId: number, input: NoteInput): Promise<Note> {
  return api(notesPath(rigId, captureId), { method: 'POST', body: input });
}

export function useCreateNote(rigId: number, captureId: number) {
  const queryClient = useQueryClient();
  return useMutation({
    mutationFn: (input: NoteInput) => createNote(rigId, captureId, input),
    onSuccess: () => queryClient.invalidateQueries({ queryKey: notesKeys.capture(rigId, captureId) }),
  });
}
