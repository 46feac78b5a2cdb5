import { captureListKey, captureScope } from '../../../lib/scope';

/** The capture's own row, job and detection; its decoded views have their own factories under captureScope(…).decoded. */
export const captureKeys = {
  list: (rigId: number) => captureListKey(rigId),
  detail: (rigId: number, captureId: number) => [...captureScope(rigId, captureId).key, 'detail'] as const,
  detection: (rigId: number, captureId: number) => [...captureKeys.detail(rigId, captureId), 'detection'] as const,
  job: (rigId: number, captureId: number) => [...captureKeys.detail(rigId, captureId), 'job'] as const,
};
