import type { TimelineFilters } from './timeline-filters';

export const timelineKeys = {
  all: ['timeline'] as const,
  capture: (rigId: number, captureId: number) => [...timelineKeys.all, rigId, captureId] as const,
  rows: (rigId: number, captureId: number, filters: TimelineFilters, start: string | null) =>
    [...timelineKeys.capture(rigId, captureId), 'rows', filters, start] as const,
  count: (rigId: number, captureId: number, filters: TimelineFilters) => [...timelineKeys.capture(rigId, captureId), 'count', filters] as const,
  at: (rigId: number, captureId: number, filters: TimelineFilters, t: number) => [...timelineKeys.capture(rigId, captureId), 'at', filters, t] as const,
};

export function timelineBase(rigId: number, captureId: number): string {
  return `/api/rigs/${rigId}/captures/${captureId}`;
}
