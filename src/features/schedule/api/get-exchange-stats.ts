import { queryOptions, useQuery } from '@tanstack/react-query';
import type { ExchangeStats } from '../../../../shared/schemas';
import { api } from '../../../lib/api';
import { exchangeKeys } from './exchange-keys';
import { captureScope } from '../../../lib/scope';

export function fetchExchangeStats(rigId: number, captureId: number, stations: number[]): Promise<ExchangeStats> {
  const params = new URLSearchParams({ bins: '24' });
  if (stations.length) params.set('station', stations.join(','));
  return api(`${captureScope(rigId, captureId).path}/exchanges/stats?${params}`);
}

export function exchangeStatsQueryOptions(rigId: number, captureId: number, stations: number[]) {
  return queryOptions({ queryKey: exchangeKeys.stats(rigId, captureId, stations), queryFn: () => fetchExchangeStats(rigId, captureId, stations) });
}

export function useExchangeStats(rigId: number, captureId: number, stations: number[], enabled = true) {
  return useQuery({ ...exchangeStatsQueryOptions(rigId, captureId, stations), enabled });
}
