import { useMutation, useQueryClient } from '@tanstack/react-query';
import type { RigDetail, RigPatch } from '../../../../shared/schemas';
import { api } from '../../../lib/api';
import { rigKeys } from './rig-keys';

export function updateRig(rigId: number, patch: RigPatch): Promise<RigDetail> {
  return api(`/api/rigs/${rigId}`, { method: 'PATCH', body: patch });
}

export function useUpdateRig(rigId: number) {
  const queryClient = useQueryClient();
  return useMutation({
    mutationFn: (patch: RigPatch) => updateRig(rigId, patch),
    onSuccess: (rig) => {
      queryClient.setQueryData(rigKeys.detail(rigId), rig);
      return queryClient.invalidateQueries({ queryKey: rigKeys.list() });
    },
  });
}
