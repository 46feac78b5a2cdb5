import { queryOptions, useSuspenseQuery } from '@tanstack/react-query';
import type { RigDetail } from '../../../../shared/schemas';
import { api } from '../../../lib/api';
import { rigKeys } from './rig-keys';

export function fetchRig(rigId: number): Promise<RigDetail> {
  return api(`/api/rigs/${rigId}`);
}

export function rigQueryOptions(rigId: number) {
  return queryOptions({ queryKey: rigKeys.detail(rigId), queryFn: () => fetchRig(rigId) });
}

export function useRig(rigId: number) {
  return useSuspenseQuery(rigQueryOptions(rigId)).data;
}
