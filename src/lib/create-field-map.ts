import { useMutation, useQueryClient } from '@tanstack/react-query';
import type { FieldMapDetail } from '../../shared/schemas';
import type { FieldMapInput } from '../../shared/decoder/calls';
import { api } from './api';
import { fieldMapKeys, fieldMapsPath } from '../features/field-maps/api/field-map-keys';

export function createFieldMap(rigId: number, name: string, document: FieldMapInput): Promise<FieldMapDetail> {
  return api(fieldMapsPath(rigId), { method: 'POST', body: { name, document } });
}

/** A new map from a document (e.g. a draft started from field hints). */
export function useCreateFieldMap(rigId: number) {
  const client = useQueryClient();
  return useMutation({
    mutationFn: ({ name, document }: { name: string; document: FieldMapInput }) => createFieldMap(rigId, name, document),
    onSuccess: () => client.invalidateQueries({ queryKey: fieldMapKeys.list(rigId) }),
  });
}
