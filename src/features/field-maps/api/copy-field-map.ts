import { useMutation, useQueryClient } from '@tanstack/react-query';
import type { FieldMapDetail } from '../../../../shared/schemas';
import { api } from '../../../lib/api';
import { fieldMapKeys, fieldMapsPath } from './field-map-keys';

export function copyFieldMap(rigId: number, copyOf: number, name: string): Promise<FieldMapDetail> {
  return api(fieldMapsPath(rigId), { method: 'POST', body: { name, copyOf } });
}

export function useCopyFieldMap(rigId: number) {
  const client = useQueryClient();
  return useMutation({
    mutationFn: ({ copyOf, name }: { copyOf: number; name: string }) => copyFieldMap(rigId, copyOf, name),
    onSuccess: () => client.invalidateQueries({ queryKey: fieldMapKeys.list(rigId) }),
  });
}
