import { captureScope } from '../../../lib/scope';

/** Line timing of one capture: service statistics, schedule windows, exchanges opened from a span (cleared with the capture's decoded views). */
export const timingKeys = {
  capture: (rigId: number, captureId: number) => [...captureScope(rigId, captureId).decoded, 'timing'] as const,
  service: (rigId: number, captureId: number) => [...timingKeys.capture(rigId, captureId), 'service'] as const,
  window: (rigId: number, captureId: number, q: WindowQuery) => [...timingKeys.capture(rigId, captureId), 'window', q] as const,
  exchange: (rigId: number, captureId: number, id: number) => [...timingKeys.capture(rigId, captureId), 'exchange', id] as const,
};

export interface WindowQuery {
  from: number;
  to: number;
  width: number;
}

export const timingPath = (rigId: number, captureId: number) => `${captureScope(rigId, captureId).path}/timing`;
