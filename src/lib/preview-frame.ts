import { queryOptions, useQuery, type QueryClient } from '@tanstack/react-query';
import type { CaptureSummaryRow, FrameDetail, TimelineFrame, TimelinePage } from '../../shared/schemas';
import { api } from './api';
import { fieldMapKeys } from '../features/field-maps/api/field-map-keys';
import { captureScope } from './scope';

// The preview reads frames through the capture and timeline APIs: the rig's captures, the first
// I frames of one, and the chosen frame's octets.

export function previewCapturesQueryOptions(rigId: number) {
  return queryOptions({
    queryKey: fieldMapKeys.previewCaptures(rigId),
    queryFn: () => api<CaptureSummaryRow[]>(`/api/rigs/${rigId}/captures`),
  });
}

export function usePreviewCaptures(rigId: number) {
  return useQuery(previewCapturesQueryOptions(rigId));
}

/** The captures a preview can use, the newest first (the preview opens on the first). */
export function decodedNewestFirst(captures: readonly CaptureSummaryRow[]): CaptureSummaryRow[] {
  return captures.filter((c) => c.status === 'decoded').sort((a, b) => b.uploadedAt.localeCompare(a.uploadedAt));
}

export function previewFramesQueryOptions(rigId: number, captureId: number | null) {
  return queryOptions({
    queryKey: fieldMapKeys.previewFrames(rigId, captureId ?? 0),
    queryFn: async () => {
      const page = await api<TimelinePage>(`${captureScope(rigId, captureId ?? 0).path}/timeline?kind=I&status=ok&limit=20&events=0`);
      return page.rows.filter((r): r is TimelineFrame => r.type === 'frame' && r.infoLength > 0);
    },
  });
}

/** I frames with an information field, from the start of the capture. */
export function usePreviewFrames(rigId: number, captureId: number | null) {
  return useQuery({ ...previewFramesQueryOptions(rigId, captureId), enabled: captureId !== null });
}

export interface PreviewFrame {
  frame: FrameDetail['frame'];
  /** the whole frame between the flags, FCS included */
  bytes: Uint8Array;
  infoOffset: number;
  info: Uint8Array;
}

export function hexToBytes(hex: string): Uint8Array {
  const out = new Uint8Array(hex.length >> 1);
  for (let i = 0; i < out.length; i++) out[i] = parseInt(hex.slice(i * 2, i * 2 + 2), 16);
  return out;
}

export async function fetchPreviewFrame(rigId: number, captureId: number, frameId: number): Promise<PreviewFrame> {
  const detail = await api<FrameDetail>(`${captureScope(rigId, captureId).path}/frames/${frameId}`);
  const bytes = hexToBytes(detail.frame.hexAll);
  // frame.hex is address..information without the FCS, so the information field is its tail
  const payload = detail.frame.hex.length >> 1;
  const infoOffset = Math.max(0, payload - detail.frame.infoLength);
  return { frame: detail.frame, bytes, infoOffset, info: bytes.slice(infoOffset, payload) };
}

export function previewFrameQueryOptions(rigId: number, captureId: number | null, frameId: number | null) {
  return queryOptions({
    queryKey: fieldMapKeys.previewFrame(rigId, captureId ?? 0, frameId ?? 0),
    queryFn: () => fetchPreviewFrame(rigId, captureId!, frameId!),
    staleTime: Infinity,
  });
}

export function usePreviewFrame(rigId: number, captureId: number | null, frameId: number | null) {
  return useQuery({ ...previewFrameQueryOptions(rigId, captureId, frameId), enabled: captureId !== null && frameId !== null });
}

/**
 * The preview's first picture, as the editor opens it when the link names no capture or frame:
 * the newest decoded capture, its first I frame with an information field. For the route's loader.
 */
export async function prefetchDefaultPreview(client: QueryClient, rigId: number, captureId: number | null, frameId: number | null): Promise<void> {
  const capture = captureId ?? decodedNewestFirst(await client.fetchQuery(previewCapturesQueryOptions(rigId)))[0]?.id ?? null;
  if (capture === null) return;
  const frame = frameId ?? (await client.fetchQuery(previewFramesQueryOptions(rigId, capture)))[0]?.id ?? null;
  if (frame !== null) await client.prefetchQuery(previewFrameQueryOptions(rigId, capture, frame));
}
