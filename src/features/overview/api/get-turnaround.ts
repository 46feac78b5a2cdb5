import { queryOptions, useQueries, useQuery } from '@tanstack/react-query';
import type { ExchangeStats } from '../../../../shared/schemas';
import { api } from '../../../lib/api';
import { overviewKeys } from '../../../lib/overview';
import { captureScope } from '../../../lib/scope';

/** Bins per turnaround histogram: fine enough to see a second hump, coarse enough for a small card. */
const BINS = 20;

/** Turnaround figures live under the overview's keys, so clearing a capture's overview clears them too. */
export const turnaroundKeys = {
  stats: (rigId: number, captureId: number, station: number | null) => [...overviewKeys.capture(rigId, captureId), 'turnaround', station] as const,
};

/** GET …/exchanges/stats for one station, or every station when `station` is null. */
export function fetchTurnaround(rigId: number, captureId: number, station: number | null): Promise<ExchangeStats> {
  const params = new URLSearchParams({ bins: String(BINS) });
  if (station !== null) params.set('station', String(station));
  return api(`${captureScope(rigId, captureId).path}/exchanges/stats?${params}`);
}

export function turnaroundQueryOptions(rigId: number, captureId: number, station: number | null) {
  return queryOptions({ queryKey: turnaroundKeys.stats(rigId, captureId, station), queryFn: () => fetchTurnaround(rigId, captureId, station) });
}

/** Every station's summary (which stations have exchanges at all). */
export function useTurnaroundSummary(rigId: number, captureId: number) {
  return useQuery(turnaroundQueryOptions(rigId, captureId, null));
}

/** One histogram per station, each binned over that station's own round trips. */
export function useStationTurnarounds(rigId: number, captureId: number, stations: number[]) {
  return useQueries({ queries: stations.map((s) => turnaroundQueryOptions(rigId, captureId, s)) });
}
