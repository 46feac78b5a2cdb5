import { queryOptions, useQuery } from '@tanstack/react-query';
import type { ExchangeStats } from '../../../../shared/schemas';
import { api } from '../../../lib/api';
import { callsPath, exchangeKeys } from './exchange-keys';

export function fetchExchangeStats(rigId: number, captureId: number, stations: number[]): Promise<ExchangeStats> {
  const params = new URLSearchParams({ bins: '24' });
  if (stations.length) params.set('station', stations.join(','));
  return api(`${callsPath(rigId, captureId)}/exchanges/stats?${params}`);
}

export function exchangeStatsQueryOptions(rigId: number, captureId: number, stations: number[]) {
  return queryOptions({ queryKey: exchangeKeys.stats(rigId, captureId, stations), queryFn: () => fetchExchangeStats(rigId, captureId, stations) });
}

export function useExchangeStats(rigId: number, captureId: number, stations: number[]) {
  return useQuery(exchangeStatsQueryOptions(rigId, captureId, stations));
}
