import { queryOptions } from '@tanstack/react-query';
import type { CaptureSummaryRow } from '../../shared/schemas';
import { api } from './api';
import { fieldMapKeys } from '../features/field-maps/api/field-map-keys';

// The field-map editor's hints panel reads the rig's captures to pick the one its hints count
// over; the preview's own frames come from the field-map feature (api/get-preview-frames.ts).

export function previewCapturesQueryOptions(rigId: number) {
  return queryOptions({
    queryKey: fieldMapKeys.previewCaptures(rigId),
    queryFn: () => api<CaptureSummaryRow[]>(`/api/rigs/${rigId}/captures`),
  });
}

/** The captures a preview can use, the newest first (the preview opens on the first). */
export function decodedNewestFirst(captures: readonly CaptureSummaryRow[]): CaptureSummaryRow[] {
  return captures.filter((c) => c.status === 'decoded').sort((a, b) => b.uploadedAt.localeCompare(a.uploadedAt));
}
