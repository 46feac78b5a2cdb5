import { useMutation, useQueryClient } from '@tanstack/react-query';
import type { Station, StationInput } from '../../../../shared/schemas';
import { api } from '../../../lib/api';
import { rigKeys } from './rig-keys';

export function createStation(rigId: number, input: StationInput): Promise<Station> {
  return api(`/api/rigs/${rigId}/stations`, { method: 'POST', body: input });
}

export function updateStation(rigId: number, stationId: number, patch: Partial<StationInput>): Promise<Station> {
  return api(`/api/rigs/${rigId}/stations/${stationId}`, { method: 'PATCH', body: patch });
}

export function deleteStation(rigId: number, stationId: number): Promise<void> {
  return api(`/api/rigs/${rigId}/stations/${stationId}`, { method: 'DELETE' });
}

/** The roster lives inside the rig detail, and the list shows station counts: refresh both. */
function useInvalidateRoster(rigId: number) {
  const queryClient = useQueryClient();
  return () =>
    Promise.all([
      queryClient.invalidateQueries({ queryKey: rigKeys.detail(rigId) }),
      queryClient.invalidateQueries({ queryKey: rigKeys.list() }),
    ]);
}

export function useCreateStation(rigId: number) {
  const invalidate = useInvalidateRoster(rigId);
  return useMutation({ mutationFn: (input: StationInput) => createStation(rigId, input), onSuccess: invalidate });
}

export function useUpdateStation(rigId: number) {
  const invalidate = useInvalidateRoster(rigId);
  return useMutation({
    mutationFn: ({ stationId, patch }: { stationId: number; patch: Partial<StationInput> }) => updateStation(rigId, stationId, patch),
    onSuccess: invalidate,
  });
}

export function useDeleteStation(rigId: number) {
  const invalidate = useInvalidateRoster(rigId);
  return useMutation({ mutationFn: (stationId: number) => deleteStation(rigId, stationId), onSuccess: invalidate });
}
