import { useMutation, useQueryClient } from '@tanstack/react-query';
import { useState } from 'react';
import { apiErrorSchema, DECODED_MEDIA_TYPE, type CaptureSummaryRow, type SessionInfo } from '../../../../shared/schemas';
import { api, ApiError } from '../../../lib/api';
import { captureKeys } from './capture-keys';
import type { UploadProgress } from './upload-capture';

const messages: Record<number, string> = {
  413: 'The decoded frames are more than this server accepts. Upload the capture itself, or decode a shorter stretch.',
  400: 'The server refused the decoded frames.',
};

/** Sends the decoded-capture file (NDJSON) with upload progress; XHR because fetch reports none. */
function sendDecoded(rigId: number, file: Blob, csrfToken: string, onProgress: (p: UploadProgress) => void): Promise<CaptureSummaryRow> {
  return new Promise((resolve, reject) => {
    const xhr = new XMLHttpRequest();
    xhr.open('POST', `/api/rigs/${rigId}/captures/decoded`);
    xhr.setRequestHeader('x-csrf-token', csrfToken);
    xhr.setRequestHeader('content-type', DECODED_MEDIA_TYPE);
    xhr.setRequestHeader('accept', 'application/json');
    xhr.withCredentials = true;
    xhr.upload.onprogress = (e) => onProgress({ loaded: e.loaded, total: e.lengthComputable ? e.total : file.size });
    xhr.onerror = () => reject(new ApiError(0, 'The upload was interrupted. Check your connection and try again.'));
    xhr.onload = () => {
      let body: unknown;
      try {
        body = xhr.responseText ? JSON.parse(xhr.responseText) : undefined;
      } catch {
        body = undefined;
      }
      if (xhr.status >= 200 && xhr.status < 300) return resolve(body as CaptureSummaryRow);
      const parsed = apiErrorSchema.safeParse(body);
      if (parsed.success) return reject(new ApiError(xhr.status, parsed.data.error, parsed.data.fields ?? {}));
      reject(new ApiError(xhr.status, messages[xhr.status] ?? `The server could not take the decoded frames (HTTP ${xhr.status}). Try again in a moment.`));
    };
    xhr.send(file);
  });
}

export function useUploadDecoded(rigId: number) {
  const queryClient = useQueryClient();
  const [progress, setProgress] = useState<UploadProgress | null>(null);
  const mutation = useMutation({
    mutationFn: async (file: Blob) => {
      setProgress({ loaded: 0, total: file.size });
      const token = (await api<SessionInfo>('/api/session')).csrfToken;
      return sendDecoded(rigId, file, token, setProgress);
    },
    onSuccess: (row) => {
      queryClient.setQueryData(captureKeys.detail(rigId, row.id), row);
      return queryClient.invalidateQueries({ queryKey: captureKeys.list(rigId) });
    },
  });
  return { ...mutation, progress };
}
