import { z } from 'zod';
import type { ServiceReport } from '../decoder/timing';
import type { ScheduleWindow } from '../decoder/timing';

// Line timing of a capture's visible run: the service statistics (GET …/timing/service) and the
// schedule view's window (GET …/timing/schedule). Built from the stored frames, request-line edges
// and exchanges by shared/decoder/timing.

/** Why a capture has no line timing, so the view can say it and offer the fix. */
export type TimingUnavailable = 'not-decoded' | 'no-frames' | 'no-roles';

export interface TimingExtent {
  /** seconds: the first and last thing on the schedule */
  from: number;
  to: number;
  /** station names on the rig, by address */
  stationNames: Record<number, string>;
  /** exchanges in the schedule (0 when the call layer has not run or paired none) */
  exchanges: number;
  frames: number;
  /** frames the schedule has no station for (unknown direction, damaged address) */
  unattributed: number;
}

export interface ServiceView {
  available: boolean;
  reason: TimingUnavailable | null;
  extent: TimingExtent | null;
  report: ServiceReport | null;
}

export const scheduleQuerySchema = z
  .object({
    from: z.coerce.number({ error: 'from must be a number of seconds' }).min(0, 'from must be 0 or more').finite(),
    to: z.coerce.number({ error: 'to must be a number of seconds' }).finite(),
    width: z.coerce.number({ error: 'width must be a number of pixels' }).int('width must be whole pixels').min(16, 'width must be at least 16 px').max(8192, 'width must be at most 8192 px'),
    /** comma-separated station addresses; all lanes when absent */
    stations: z
      .string()
      .regex(/^\d{1,3}(,\d{1,3})*$/, 'stations must be addresses separated by commas')
      .transform((s) => s.split(',').map(Number))
      .optional(),
  })
  .refine((q) => q.to > q.from, { message: 'to must be after from', path: ['to'] });
export type ScheduleQuery = z.input<typeof scheduleQuerySchema>;

export interface ScheduleView {
  available: boolean;
  reason: TimingUnavailable | null;
  extent: TimingExtent | null;
  window: ScheduleWindow | null;
}
