import { queryOptions, useSuspenseQuery, useQuery } from '@tanstack/react-query';
import type { RigSummary } from '../../../../shared/schemas';
import { api } from '../../../lib/api';
import { rigKeys } from './rig-keys';

export function fetchRigs(): Promise<RigSummary[]> {
  return api('/api/rigs');
}

export function rigsQueryOptions() {
  return queryOptions({ queryKey: rigKeys.list(), queryFn: fetchRigs });
}

export function useRigs() {
  return useSuspenseQuery(rigsQueryOptions()).data;
}

/** Non-suspending variant for chrome (header) that must not hold the page back. */
export function useRigsIfLoaded(enabled: boolean) {
  return useQuery({ ...rigsQueryOptions(), enabled });
}
