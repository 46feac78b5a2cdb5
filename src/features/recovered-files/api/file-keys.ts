import { captureScope } from '../../../lib/scope';
export const recoveredFileKeys = {
  capture: (rigId: number, captureId: number) => [...captureScope(rigId, captureId).decoded, 'recovered-files'] as const,
  list: (rigId: number, captureId: number) => [...recoveredFileKeys.capture(rigId, captureId), 'list'] as const,
  detail: (rigId: number, captureId: number, fileId: number) => [...recoveredFileKeys.capture(rigId, captureId), 'detail', fileId] as const,
};

export function filesPath(rigId: number, captureId: number): string {
  return `${captureScope(rigId, captureId).path}/files`;
}

/** The API answers the file's bytes as an attachment; a plain link downloads it. */
export function fileDownloadUrl(rigId: number, captureId: number, fileId: number): string {
  return `${filesPath(rigId, captureId)}/${fileId}/download`;
}
