import { useMutation, useQueryClient } from '@tanstack/react-query';
import { useState } from 'react';
import { apiErrorSchema, type CaptureSummaryRow } from '../../../../shared/schemas';
import { ApiError, withCsrfToken } from '../../../lib/api';
import { captureKeys } from './capture-keys';

export interface UploadProgress {
  loaded: number;
  total: number;
}

const uploadMessages: Record<number, string> = {
  413: 'The file is larger than this server accepts. Split the capture or record a shorter stretch.',
  422: 'This file is not a capture Flagline can read.',
};

/**
 * Sends the file as multipart field `file`. XMLHttpRequest rather than fetch, because only
 * XHR reports upload progress; the CSRF header is the same one the api client sends.
 */
export function uploadCapture(
  rigId: number,
  file: File,
  csrfToken: string | undefined,
  onProgress: (p: UploadProgress) => void,
  signal?: AbortSignal,
): Promise<CaptureSummaryRow> {
  return new Promise((resolve, reject) => {
    const xhr = new XMLHttpRequest();
    xhr.open('POST', `/api/rigs/${rigId}/captures`);
    if (csrfToken) xhr.setRequestHeader('x-csrf-token', csrfToken);
    xhr.setRequestHeader('accept', 'application/json');
    xhr.withCredentials = true;
    xhr.upload.onprogress = (e) => onProgress({ loaded: e.loaded, total: e.lengthComputable ? e.total : file.size });
    xhr.onerror = () => reject(new ApiError(0, 'The upload was interrupted. Check your connection and try again.'));
    xhr.onabort = () => reject(new DOMException('Upload cancelled', 'AbortError'));
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
      reject(new ApiError(xhr.status, uploadMessages[xhr.status] ?? `The server could not take the file (HTTP ${xhr.status}). Try again in a moment.`));
    };
    signal?.addEventListener('abort', () => xhr.abort());
    const form = new FormData();
    form.append('file', file);
    xhr.send(form);
  });
}

export function useUploadCapture(rigId: number) {
  const queryClient = useQueryClient();
  const [progress, setProgress] = useState<UploadProgress | null>(null);
  const mutation = useMutation({
    mutationFn: async (file: File) => {
      setProgress({ loaded: 0, total: file.size });
      return withCsrfToken((token) => uploadCapture(rigId, file, token, setProgress));
    },
    onSuccess: (row) => {
      queryClient.setQueryData(captureKeys.detail(rigId, row.id), row);
      return queryClient.invalidateQueries({ queryKey: captureKeys.list(rigId) });
    },
  });
  return { ...mutation, progress };
}
