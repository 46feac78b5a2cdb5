import { driverOf } from '../../db/client';
import { CallQueue } from '../../runs/call-queue';
import type { CaptureModule } from '../captures/module';
import { applyMapChosenDuringDecode } from './capture-layer';

/** The call-layer services: the capture services plus the queue of call-only re-runs. */
export interface CallsModule extends CaptureModule {
  calls: CallQueue;
}

export function createCallsModule(captures: CaptureModule): CallsModule {
  const m: CallsModule = { ...captures, calls: new CallQueue(driverOf(captures.db), captures.jobs) };
  captures.jobs.onVisible = (captureId, jobId) => applyMapChosenDuringDecode(m, captureId, jobId);
  return m;
}
