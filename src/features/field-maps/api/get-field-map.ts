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
    // a saved version never changes; the latest is read again when the editor opens, but not a
    // second time right after the route's loader read it (a save from elsewhere meanwhile is
    // caught by the save's version check)
    staleTime: version ? Infinity : 5_000,
  });
}

export function useFieldMap(rigId: number, mapId: number, version?: number) {
  return useQuery(fieldMapQueryOptions(rigId, mapId, version));
}

export function writeUpHref(rigId: number, mapId: number, version?: number): string {
  return `${fieldMapsPath(rigId)}/${mapId}/export.md${version ? `?version=${version}` : ''}`;
}
