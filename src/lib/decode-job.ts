import { queryOptions, useMutation, useQuery, useQueryClient } from '@tanstack/react-query';
import type { DecodeJob } from '../../shared/schemas';
import { api } from './api';
import { captureKeys } from '../features/captures/api/capture-keys';
import { captureScope } from './scope';

export function fetchJob(rigId: number, captureId: number): Promise<DecodeJob> {
  return api(`${captureScope(rigId, captureId).path}/job`);
}

export function isJobActive(job: DecodeJob | null | undefined): boolean {
  return job?.state === 'queued' || job?.state === 'running';
}

export function jobQueryOptions(rigId: number, captureId: number) {
  return queryOptions({
    queryKey: captureKeys.job(rigId, captureId),
    queryFn: () => fetchJob(rigId, captureId),
    staleTime: 0,
    // poll while the decoder works; stop once it has an outcome
    refetchInterval: (query) => (isJobActive(query.state.data) ? 400 : false),
  });
}

export function useJob(rigId: number, captureId: number, enabled = true) {
  return useQuery({ ...jobQueryOptions(rigId, captureId), enabled });
}

function useJobMutation(rigId: number, captureId: number, send: () => Promise<DecodeJob>) {
  const queryClient = useQueryClient();
  return useMutation({
    mutationFn: send,
    onSuccess: (job) => {
      queryClient.setQueryData(captureKeys.job(rigId, captureId), job);
      return Promise.all([
        queryClient.invalidateQueries({ queryKey: captureKeys.detail(rigId, captureId), exact: true }),
        queryClient.invalidateQueries({ queryKey: captureKeys.list(rigId) }),
      ]);
    },
  });
}

export function useStartDecode(rigId: number, captureId: number) {
  return useJobMutation(rigId, captureId, () => api(`${captureScope(rigId, captureId).path}/decode`, { method: 'POST' }));
}

export function useCancelDecode(rigId: number, captureId: number) {
  return useJobMutation(rigId, captureId, () => api(`${captureScope(rigId, captureId).path}/job/cancel`, { method: 'POST' }));
}
