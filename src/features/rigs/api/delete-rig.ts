import { useMutation, useQueryClient } from '@tanstack/react-query';
import { api } from '../../../lib/api';
import { rigKeys } from './rig-keys';

export function deleteRig(rigId: number): Promise<void> {
  return api(`/api/rigs/${rigId}`, { method: 'DELETE' });
}

export function useDeleteRig(rigId: number) {
  const queryClient = useQueryClient();
  return useMutation({
    mutationFn: () => deleteRig(rigId),
    onSuccess: () => queryClient.invalidateQueries({ queryKey: rigKeys.list() }),
  });
}

/**
 * Called after leaving the rig's page. The router commits the next page in a transition, so the
 * rig's views may still be mounted: only queries no view watches are dropped (a removed query a
 * mounted view still reads would be fetched again, and answer 404); the rest go with the views.
 */
export function forgetRig(queryClient: ReturnType<typeof useQueryClient>, rigId: number): void {
  queryClient.removeQueries({ queryKey: rigKeys.detail(rigId), type: 'inactive' });
  queryClient.removeQueries({ queryKey: rigKeys.members(rigId), type: 'inactive' });
}
