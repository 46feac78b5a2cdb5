import { useState } from 'react';
import { useQueryClient } from '@tanstack/react-query';
import type { CaptureSummaryRow } from '../../../../shared/schemas';
import { Button } from '../../../components/button';
import { ErrorNotice } from '../../../components/notice';
import { forgetCapture, useDeleteCapture } from '../api/delete-capture';

interface Props {
  rigId: number;
  capture: Pick<CaptureSummaryRow, 'id' | 'name'>;
  /** runs after the server removed it, before the cache forgets it: e.g. leave the capture's own page */
  onDeleted?: () => Promise<unknown> | void;
  compact?: boolean;
}

/** Delete, then "Yes, delete …" / "Keep it": one deliberate second click, no browser dialog. */
export function DeleteCaptureButton({ rigId, capture, onDeleted, compact = false }: Props) {
  const remove = useDeleteCapture(rigId);
  const queryClient = useQueryClient();
  const [confirming, setConfirming] = useState(false);
  const size = compact ? 'px-2 py-0.5 text-xs' : '';
  return (
    <span className="inline-flex flex-col items-start gap-1">
      {confirming ? (
        <span className="inline-flex flex-wrap gap-1.5">
          <Button
            variant="danger"
            className={size}
            busy={remove.isPending}
            onClick={() =>
              remove.mutate(capture.id, {
                onSuccess: async () => {
                  await onDeleted?.();
                  forgetCapture(queryClient, rigId, capture.id);
                },
              })
            }
          >
            Yes, delete “{capture.name}”
          </Button>
          <Button variant="secondary" className={size} onClick={() => setConfirming(false)}>
            Keep it
          </Button>
        </span>
      ) : (
        <Button variant="dangerGhost" className={size} aria-label={`Delete the capture ${capture.name}`} onClick={() => setConfirming(true)}>
          Delete…
        </Button>
      )}
      {remove.error ? <ErrorNotice error={remove.error} /> : null}
    </span>
  );
}
