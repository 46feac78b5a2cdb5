import { keepPreviousData, queryOptions, useQuery } from '@tanstack/react-query';
import type { DamageCauseName, FaultDeskView } from '../../shared/schemas';
import { api } from './api';
import { FAULT_PAGE, faultKeys } from './fault-keys';
import { captureScope } from './scope';

export function fetchFaults(rigId: number, captureId: number, cause: DamageCauseName | null, offset: number): Promise<FaultDeskView> {
  const params = new URLSearchParams({ limit: String(FAULT_PAGE), offset: String(offset) });
  if (cause) params.set('cause', cause);
  return api(`${captureScope(rigId, captureId).path}/faults?${params}`);
}

export function faultsQueryOptions(rigId: number, captureId: number, cause: DamageCauseName | null, offset: number) {
  return queryOptions({ queryKey: faultKeys.page(rigId, captureId, cause, offset), queryFn: () => fetchFaults(rigId, captureId, cause, offset) });
}

export function useFaults(rigId: number, captureId: number, cause: DamageCauseName | null, offset: number) {
  return useQuery({ ...faultsQueryOptions(rigId, captureId, cause, offset), placeholderData: keepPreviousData });
}
