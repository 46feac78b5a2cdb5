import type { DamageCauseName } from '../../../../shared/schemas';

/** The fault desk of one capture; keys start [view, rigId, captureId] so a finished decode can clear them together. */
export const faultKeys = {
  all: ['fault-desk'] as const,
  capture: (rigId: number, captureId: number) => [...faultKeys.all, rigId, captureId] as const,
  page: (rigId: number, captureId: number, cause: DamageCauseName | null, offset: number) => [...faultKeys.capture(rigId, captureId), cause, offset] as const,
};

export const FAULT_PAGE = 100;
