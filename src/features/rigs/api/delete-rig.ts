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

/** Called once the rig's page is gone, so no mounted view refetches the deleted rig. */
export function forgetRig(queryClient: ReturnType<typeof useQueryClient>, rigId: number): void {
  queryClient.removeQueries({ queryKey: rigKeys.detail(rigId) });
  queryClient.removeQueries({ queryKey: rigKeys.members(rigId) });
}
