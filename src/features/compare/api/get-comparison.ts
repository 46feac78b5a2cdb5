import { queryOptions, useQuery } from '@tanstack/react-query';
import type { CompareResult } from '../../../../shared/schemas';
import { api } from '../../../lib/api';

export const comparisonKeys = {
  all: ['comparisons'] as const,
  rig: (rigId: number) => [...comparisonKeys.all, rigId] as const,
  pair: (rigId: number, a: number, b: number) => [...comparisonKeys.rig(rigId), a, b] as const,
};

export function fetchComparison(rigId: number, a: number, b: number): Promise<CompareResult> {
  return api(`/api/rigs/${rigId}/compare?${new URLSearchParams({ a: String(a), b: String(b) })}`);
}

export function comparisonQueryOptions(rigId: number, a: number, b: number) {
  return queryOptions({ queryKey: comparisonKeys.pair(rigId, a, b), queryFn: () => fetchComparison(rigId, a, b) });
}

export function useComparison(rigId: number, a: number, b: number | null) {
  return useQuery({ ...comparisonQueryOptions(rigId, a, b ?? 0), enabled: b !== null });
}
