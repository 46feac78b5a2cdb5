import type { DamageCauseName } from '../../shared/schemas';
import { captureScope } from './scope';

/** The fault desk of one capture, under its decoded views (captureScope) so a finished decode clears it. */
export const faultKeys = {
  capture: (rigId: number, captureId: number) => [...captureScope(rigId, captureId).decoded, 'fault-desk'] as const,
  page: (rigId: number, captureId: number, cause: DamageCauseName | null, offset: number) => [...faultKeys.capture(rigId, captureId), cause, offset] as const,
};

export const FAULT_PAGE = 100;
