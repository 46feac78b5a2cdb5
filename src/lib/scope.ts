import type { QueryClient } from '@tanstack/react-query';

/**
 * One capture as the client addresses it. Every query key about the capture starts with `key`
 * and every API path with `path`, so the capture's URL is written once and its cached queries can
 * be cleared by prefix rather than by key positions:
 *   [...key, 'detail', …]   the capture's row, its decode job and the settings detection
 *   [...decoded, view, …]   everything read from the capture's decoded rows (overview, timeline,
 *                           frames, notes, fault desk, exchanges, recovered files, field-map
 *                           previews): replaced by a finished decode
 * Each resource keeps its own query-key factory (…-keys.ts in its feature); the factories build
 * their keys from here.
 */
export function captureScope(rigId: number, captureId: number) {
  const key = ['capture', rigId, captureId] as const;
  return {
    key,
    decoded: [...key, 'decoded'] as const,
    /** the capture's API resource: `${path}/timeline`, `${path}/frames/7`, … */
    path: `/api/rigs/${rigId}/captures/${captureId}`,
    /** the capture's pages in the app */
    page: `/rigs/${rigId}/captures/${captureId}`,
  };
}

export type CaptureScope = ReturnType<typeof captureScope>;

/** Lists of a rig's captures (the captures page, the field-map preview's choice): invalidated together. */
export function captureListKey(rigId: number) {
  return ['capture-list', rigId] as const;
}

/** Views that read two captures of a rig side by side (comparisons): [...capturePairsKey(rigId), a, b, …]. */
export function capturePairsKey(rigId: number) {
  return ['capture-pairs', rigId] as const;
}

/**
 * A decode of the capture finished: its decoded views, and any comparison (either side may be this
 * capture), are stale. `inactive` drops only what no mounted view watches.
 */
export function clearDecodedViews(queryClient: QueryClient, rigId: number, captureId: number, type: 'all' | 'inactive' = 'all'): void {
  queryClient.removeQueries({ queryKey: captureScope(rigId, captureId).decoded, type });
  queryClient.removeQueries({ queryKey: capturePairsKey(rigId), type });
}
