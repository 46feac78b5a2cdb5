import { useMutation, useQueryClient } from '@tanstack/react-query';
import { api } from '../../../lib/api';
import { notesKeys, notesPath } from './notes-keys';

export function deleteNote(rigId: number, captureId: number, noteId: number): Promise<void> {
  return api(`${notesPath(rigId, captureId)}/${noteId}`, { method: 'DELETE' });
}

export function useDeleteNote(rigId: number, captureId: number) {
  const queryClient = useQueryClient();
  return useMutation({
    mutationFn: (noteId: number) => deleteNote(rigId, captureId, noteId),
    onSuccess: () => queryClient.invalidateQueries({ queryKey: notesKeys.capture(rigId, captureId) }),
  });
}
