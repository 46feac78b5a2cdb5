import { queryOptions, useQuery } from '@tanstack/react-query';
import type { FieldMapSummary } from '../../../../shared/schemas';
import { api } from '../../../lib/api';
import { fieldMapKeys, fieldMapsPath } from './field-map-keys';

export function fetchFieldMaps(rigId: number): Promise<FieldMapSummary[]> {
  return api(fieldMapsPath(rigId));
}

export function fieldMapsQueryOptions(rigId: number) {
  return queryOptions({ queryKey: fieldMapKeys.list(rigId), queryFn: () => fetchFieldMaps(rigId) });
}

export function useFieldMaps(rigId: number) {
  return useQuery(fieldMapsQueryOptions(rigId));
}
