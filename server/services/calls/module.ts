import type { CaptureModule } from '../captures/module';
import { CallRunner } from './call-runner';

/** The call-layer services: the capture services plus the queue of call-only re-runs. */
export interface CallsModule extends CaptureModule {
  calls: CallRunner;
}

export function createCallsModule(captures: CaptureModule): CallsModule {
  return { ...captures, calls: new CallRunner(captures.sqlite, captures.jobs) };
}
