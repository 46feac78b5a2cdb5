import { useMutation, useQueryClient } from '@tanstack/react-query';
import type { RigDetail, RigInput } from '../../../../shared/schemas';
import { api } from '../../../lib/api';
import { rigKeys } from './rig-keys';

export function createRig(input: RigInput): Promise<RigDetail> {
  return api('/api/rigs', { method: 'POST', body: input });
}

export function useCreateRig() {
  const queryClient = useQueryClient();
  return useMutation({
    mutationFn: createRig,
    onSuccess: (rig) => {
      queryClient.setQueryData(rigKeys.detail(rig.id), rig);
      return queryClient.invalidateQueries({ queryKey: rigKeys.list() });
    },
  });
}
