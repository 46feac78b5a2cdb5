import type { TimelineFilters } from './timeline-filters';
import { captureScope } from '../../../lib/scope';

export const timelineKeys = {
  capture: (rigId: number, captureId: number) => [...captureScope(rigId, captureId).decoded, 'timeline'] as const,
  rows: (rigId: number, captureId: number, filters: TimelineFilters, start: string | null) =>
    [...timelineKeys.capture(rigId, captureId), 'rows', filters, start] as const,
  count: (rigId: number, captureId: number, filters: TimelineFilters) => [...timelineKeys.capture(rigId, captureId), 'count', filters] as const,
  at: (rigId: number, captureId: number, filters: TimelineFilters, t: number) => [...timelineKeys.capture(rigId, captureId), 'at', filters, t] as const,
};
