import { keepPreviousData, queryOptions, useQuery } from '@tanstack/react-query';
import type { CaptureFieldHints } from '../../../shared/schemas';
import { api } from '../../lib/api';
import { discoveryPath, fieldHintKeys } from './discovery-keys';

export function fetchFieldHints(rigId: number, captureId: number, selector: number | 'none'): Promise<CaptureFieldHints> {
  return api(`${discoveryPath(rigId, captureId)}/field-hints?selector=${selector}`);
}

export function fieldHintsQueryOptions(rigId: number, captureId: number, selector: number | 'none') {
  return queryOptions({ queryKey: fieldHintKeys.selector(rigId, captureId, selector), queryFn: () => fetchFieldHints(rigId, captureId, selector), staleTime: Infinity });
}

export function useFieldHints(rigId: number, captureId: number, selector: number | 'none', enabled = true) {
  return useQuery({ ...fieldHintsQueryOptions(rigId, captureId, selector), enabled, placeholderData: keepPreviousData });
}
