import { useMutation, useQueryClient, type QueryClient } from '@tanstack/react-query';
import { api } from '../../../lib/api';
import { captureKeys } from './capture-keys';
import { captureScope, clearDecodedViews } from '../../../lib/scope';

export function deleteCapture(rigId: number, captureId: number): Promise<void> {
  return api(captureScope(rigId, captureId).path, { method: 'DELETE' });
}

/**
 * Everything cached about one capture: its row and every view of it (all under its captureScope
 * key), and comparisons with it. Only what no mounted view watches is dropped: the router commits
 * the next page in a transition, and a removed query a view still reads would be fetched again
 * (and answer 404); the rest goes with the views.
 */
export function forgetCapture(queryClient: QueryClient, rigId: number, captureId: number): void {
  queryClient.removeQueries({ queryKey: captureScope(rigId, captureId).key, type: 'inactive' });
  clearDecodedViews(queryClient, rigId, captureId, 'inactive');
}

/** Owner only (the server refuses anyone else): removes the stored file, its decodes, frames, exchanges and notes. */
export function useDeleteCapture(rigId: number) {
  const queryClient = useQueryClient();
  return useMutation({
    mutationFn: (captureId: number) => deleteCapture(rigId, captureId),
    onSuccess: () => queryClient.invalidateQueries({ queryKey: captureKeys.list(rigId) }),
  });
}
