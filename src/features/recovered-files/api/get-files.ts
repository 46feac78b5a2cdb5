import { queryOptions, useQuery } from '@tanstack/react-query';
import type { RecoveredFileSummary } from '../../../../shared/schemas';
import { api } from '../../../lib/api';
import { filesPath, recoveredFileKeys } from './file-keys';

export function fetchRecoveredFiles(rigId: number, captureId: number): Promise<RecoveredFileSummary[]> {
  return api(filesPath(rigId, captureId));
}

export function recoveredFilesQueryOptions(rigId: number, captureId: number) {
  return queryOptions({ queryKey: recoveredFileKeys.list(rigId, captureId), queryFn: () => fetchRecoveredFiles(rigId, captureId) });
}

export function useRecoveredFiles(rigId: number, captureId: number) {
  return useQuery(recoveredFilesQueryOptions(rigId, captureId));
}
