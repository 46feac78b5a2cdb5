import { useMutation, useQueryClient } from '@tanstack/react-query';
import { useState } from 'react';
import { DECODED_MEDIA_TYPE, type CaptureSummaryRow } from '../../../../shared/schemas';
import { withCsrfToken } from '../../../lib/api';
import { xhrUpload, type UploadProgress } from '../../../lib/xhr-upload';
import { captureKeys } from './capture-keys';

const messages: Record<number, string> = {
  413: 'The decoded frames are more than this server accepts. Upload the capture itself, or decode a shorter stretch.',
  400: 'The server refused the decoded frames.',
};

/** Sends the decoded-capture file (NDJSON) with upload progress. */
function sendDecoded(rigId: number, file: Blob, csrfToken: string | undefined, onProgress: (p: UploadProgress) => void): Promise<CaptureSummaryRow> {
  return xhrUpload<CaptureSummaryRow>({
    url: `/api/rigs/${rigId}/captures/decoded`,
    body: file,
    size: file.size,
    headers: { 'content-type': DECODED_MEDIA_TYPE },
    csrfToken,
    onProgress,
    messages,
    fallback: (status) => `The server could not take the decoded frames (HTTP ${status}). Try again in a moment.`,
  });
}

export function useUploadDecoded(rigId: number) {
  const queryClient = useQueryClient();
  const [progress, setProgress] = useState<UploadProgress | null>(null);
  const mutation = useMutation({
    mutationFn: async (file: Blob) => {
      setProgress({ loaded: 0, total: file.size });
      return withCsrfToken((token) => sendDecoded(rigId, file, token, setProgress));
    },
    onSuccess: (row) => {
      queryClient.setQueryData(captureKeys.detail(rigId, row.id), row);
      return queryClient.invalidateQueries({ queryKey: captureKeys.list(rigId) });
    },
  });
  return { ...mutation, progress };
}
