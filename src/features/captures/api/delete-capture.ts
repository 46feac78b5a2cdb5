import { useMutation, useQueryClient, type QueryClient } from '@tanstack/react-query';
import { api } from '../../../lib/api';
import { captureKeys, capturePath } from './capture-keys';

export function deleteCapture(rigId: number, captureId: number): Promise<void> {
  return api(capturePath(rigId, captureId), { method: 'DELETE' });
}

/**
 * Everything cached about one capture: its row and every view of it (their keys start
 * [view, rigId, captureId, …]). Only what no mounted view watches is dropped: the router commits
 * the next page in a transition, and a removed query a view still reads would be fetched again
 * (and answer 404); the rest goes with the views.
 */
export function forgetCapture(queryClient: QueryClient, rigId: number, captureId: number): void {
  queryClient.removeQueries({ queryKey: captureKeys.detail(rigId, captureId), type: 'inactive' });
  queryClient.removeQueries({ predicate: (q) => q.queryKey[0] !== captureKeys.all[0] && q.queryKey[1] === rigId && q.queryKey[2] === captureId, type: 'inactive' });
}

/** Owner only (the server refuses anyone else): removes the stored file, its decodes, frames, exchanges and notes. */
export function useDeleteCapture(rigId: number) {
  const queryClient = useQueryClient();
  return useMutation({
    mutationFn: (captureId: number) => deleteCapture(rigId, captureId),
    onSuccess: () => queryClient.invalidateQueries({ queryKey: captureKeys.list(rigId) }),
  });
}
