import { useMutation, useQueryClient } from '@tanstack/react-query';
import type { Note } from '../../../../shared/schemas';
import { api } from '../../../lib/api';
import { notesKeys, notesPath } from './notes-keys';

export function updateNote(rigId: number, captureId: number, noteId: number, body: string): Promise<Note> {
  return api(`${notesPath(rigId, captureId)}/${noteId}`, { method: 'PATCH', body: { body } });
}

export function useUpdateNote(rigId: number, captureId: number) {
  const queryClient = useQueryClient();
  return useMutation({
    mutationFn: ({ noteId, body }: { noteId: number; body: string }) => updateNote(rigId, captureId, noteId, body),
    onSuccess: () => queryClient.invalidateQueries({ queryKey: notesKeys.capture(rigId, captureId) }),
  });
}
