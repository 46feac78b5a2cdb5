import { queryOptions, useQuery } from '@tanstack/react-query';
import type { FieldMapDetail } from '../../../../shared/schemas';
import { api } from '../../../lib/api';
import { fieldMapKeys, fieldMapsPath } from './field-map-keys';

/** One map at a version (the latest when `version` is omitted). */
export function fetchFieldMap(rigId: number, mapId: number, version?: number): Promise<FieldMapDetail> {
  return api(`${fieldMapsPath(rigId)}/${mapId}${version ? `?version=${version}` : ''}`);
}

export function fieldMapQueryOptions(rigId: number, mapId: number, version?: number) {
  return queryOptions({
    queryKey: fieldMapKeys.version(rigId, mapId, version ?? 'latest'),
    queryFn: () => fetchFieldMap(rigId, mapId, version),
    // a saved version never changes
    staleTime: version ? Infinity : 0,
  });
}

export function useFieldMap(rigId: number, mapId: number, version?: number) {
  return useQuery(fieldMapQueryOptions(rigId, mapId, version));
}

export function writeUpHref(rigId: number, mapId: number, version?: number): string {
  return `${fieldMapsPath(rigId)}/${mapId}/export.md${version ? `?version=${version}` : ''}`;
}
