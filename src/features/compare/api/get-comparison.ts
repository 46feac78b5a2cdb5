import { queryOptions, useQuery } from '@tanstack/react-query';
import type { CompareResult } from '../../../../shared/schemas';
import { api } from '../../../lib/api';
import { capturePairsKey } from '../../../lib/scope';

/** Under the rig's capture pairs (lib/scope), so a finished decode of either capture clears the comparison. */
export const comparisonKeys = {
  rig: (rigId: number) => [...capturePairsKey(rigId), 'comparison'] as const,
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
