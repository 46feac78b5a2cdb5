import { captureScope } from '../../lib/scope';
/** What a capture reveals about itself: keyed [view, rigId, captureId, …] like the other capture views, so a new decode drops them. */
export const discoveryKeys = {
  all: ['discovery'] as const,
  capture: (rigId: number, captureId: number) => [...discoveryKeys.all, rigId, captureId] as const,
};

export const fieldHintKeys = {
  all: ['field-hints'] as const,
  capture: (rigId: number, captureId: number) => [...fieldHintKeys.all, rigId, captureId] as const,
  selector: (rigId: number, captureId: number, selector: number | 'none') => [...fieldHintKeys.capture(rigId, captureId), selector] as const,
};

export function discoveryPath(rigId: number, captureId: number): string {
  return captureScope(rigId, captureId).path;
}
