import { queryOptions, useQuery } from '@tanstack/react-query';
import type { RecoveredFileDetail } from '../../../../shared/schemas';
import { api } from '../../../lib/api';
import { filesPath, recoveredFileKeys } from './file-keys';

export function fetchRecoveredFile(rigId: number, captureId: number, fileId: number): Promise<RecoveredFileDetail> {
  return api(`${filesPath(rigId, captureId)}/${fileId}`);
}

export function recoveredFileQueryOptions(rigId: number, captureId: number, fileId: number) {
  return queryOptions({ queryKey: recoveredFileKeys.detail(rigId, captureId, fileId), queryFn: () => fetchRecoveredFile(rigId, captureId, fileId) });
}

export function useRecoveredFile(rigId: number, captureId: number, fileId: number) {
  return useQuery(recoveredFileQueryOptions(rigId, captureId, fileId));
}
