// The line-timing views of a capture's visible run: service statistics, and one window of the
// schedule at a given width (level of detail by scheduleWindow: spans narrower than two pixels,
// or more than four per pixel in a row, come as counts per pixel column).
import { and, eq } from 'drizzle-orm';
import { scheduleWindow } from '../../../shared/decoder/timing';
import { callRuns, captureCallLayers, stations } from '../../db/schema';
import type { scheduleQuerySchema, ScheduleQuery, ScheduleView, ServiceView, TimingExtent, TimingUnavailable } from '../../../shared/schemas';

import type { z } from 'zod';
import type { CaptureModule } from '../captures/module';
import { currentJob, type CaptureRow } from '../captures/rows';
import { timingOf, type BuiltTiming } from './build-timing';
import { compactWindow } from './window-size';
import { notFound } from '../../http/errors';
import type { ExchangeRow } from '../../../shared/schemas';
import { visibleRun } from '../calls/capture-layer';
import { findExchange, stationNames, toExchangeRow } from '../calls/exchanges';
import type { CallsModule } from '../calls/module';

type Loaded = { built: BuiltTiming; extent: TimingExtent } | { reason: TimingUnavailable };

function load(m: CaptureModule, c: CaptureRow): Loaded {
  const job = currentJob(m, c);
  if (!job || job.state !== 'done') return { reason: 'not-decoded' };
  // the call run whose exchanges the lists show: the capture's current one, if it belongs to this decode run
  const callRunId = m.db
    .select({ id: callRuns.id })
    .from(captureCallLayers)
    .innerJoin(callRuns, eq(callRuns.id, captureCallLayers.currentRunId))
    .where(and(eq(captureCallLayers.captureId, c.id), eq(callRuns.decodeJobId, job.id), eq(callRuns.state, 'done')))
    .get()?.id;
  const named = m.db.select({ address: stations.address, name: stations.name, role: stations.role }).from(stations).where(eq(stations.rigId, c.rigId)).all();
  const built = timingOf(
    m.db,
    job.id,
    callRunId ?? null,
    named.filter((s) => s.role === 'station').map((s) => s.address).sort((a, b) => a - b),
  );
  if (built.frames === 0) return { reason: 'no-frames' };
  if (built.noRoles || built.schedule.lanes.length === 0) return { reason: 'no-roles' };
  return {
    built,
    extent: {
      from: built.schedule.from,
      to: built.schedule.to,
      stationNames: Object.fromEntries(named.map((s) => [s.address, s.name])),
      exchanges: built.exchanges,
      frames: built.frames,
      unattributed: built.unattributed,
    },
  };
}

export function serviceView(m: CaptureModule, c: CaptureRow): ServiceView {
  const l = load(m, c);
  if ('reason' in l) return { available: false, reason: l.reason, extent: null, report: null };
  return { available: true, reason: null, extent: l.extent, report: l.built.service };
}

export function scheduleView(m: CaptureModule, c: CaptureRow, q: z.output<typeof scheduleQuerySchema>): ScheduleView {
  const l = load(m, c);
  if ('reason' in l) return { available: false, reason: l.reason, extent: null, window: null };
  return { available: true, reason: null, extent: l.extent, window: compactWindow(scheduleWindow(l.built.schedule, { from: q.from, to: q.to, width: q.width, stations: q.stations })) };
}

export type { ScheduleQuery };

/** One exchange of the visible call run, by id: what a span selected on the schedule opens. */
export function scheduleExchange(m: CallsModule, c: CaptureRow, exchangeId: number): ExchangeRow {
  const run = visibleRun(m, c.id);
  const row = run ? findExchange(m, run.runId, exchangeId) : undefined;
  if (!row) throw notFound(`No exchange with id ${exchangeId} in this capture's call layer`);
  return toExchangeRow(row, stationNames(m, c.id));
}
