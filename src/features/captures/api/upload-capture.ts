import { useMutation, useQueryClient } from '@tanstack/react-query';
import { useState } from 'react';
import type { CaptureSummaryRow } from '../../../../shared/schemas';
import { withCsrfToken } from '../../../lib/api';
import { xhrUpload, type UploadProgress } from '../../../lib/xhr-upload';
import { captureKeys } from './capture-keys';

export type { UploadProgress } from '../../../lib/xhr-upload';

const uploadMessages: Record<number, string> = {
  413: 'The file is larger than this server accepts. Split the capture or record a shorter stretch.',
  422: 'This file is not a capture Flagline can read.',
};

/** Sends the file as multipart field `file`, with upload progress. */
export function uploadCapture(
  rigId: number,
  file: File,
  csrfToken: string | undefined,
  onProgress: (p: UploadProgress) => void,
  signal?: AbortSignal,
): Promise<CaptureSummaryRow> {
  const form = new FormData();
  form.append('file', file);
  return xhrUpload<CaptureSummaryRow>({
    url: `/api/rigs/${rigId}/captures`,
    body: form,
    size: file.size,
    csrfToken,
    onProgress,
    signal,
    messages: uploadMessages,
    fallback: (status) => `The server could not take the file (HTTP ${status}). Try again in a moment.`,
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
