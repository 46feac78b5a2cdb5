import { useMutation, useQueryClient } from '@tanstack/react-query';
import type { FieldMapDetail } from '../../../../shared/schemas';
import type { FieldMapInput } from '../../../../shared/decoder/calls';
import { api } from '../../../lib/api';
import { fieldMapKeys, fieldMapsPath } from './field-map-keys';

export interface SaveFieldMapInput {
  document: FieldMapInput;
  baseVersion: number;
  name?: string;
}

/** Saves a new version; 409 when someone saved after `baseVersion`, 400 with fields keyed "document.<path>". */
export function saveFieldMap(rigId: number, mapId: number, input: SaveFieldMapInput): Promise<FieldMapDetail> {
  return api(`${fieldMapsPath(rigId)}/${mapId}`, { method: 'PUT', body: input });
}

export function useSaveFieldMap(rigId: number, mapId: number) {
  const client = useQueryClient();
  return useMutation({
    mutationFn: (input: SaveFieldMapInput) => saveFieldMap(rigId, mapId, input),
    onSuccess: (saved) => {
      client.setQueryData(fieldMapKeys.version(rigId, mapId, saved.version), saved);
      void client.invalidateQueries({ queryKey: fieldMapKeys.list(rigId) });
      void client.invalidateQueries({ queryKey: fieldMapKeys.version(rigId, mapId, 'latest') });
    },
  });
}
