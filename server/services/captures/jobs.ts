import { eq } from 'drizzle-orm';
import type { DecodeJob } from '../../../shared/schemas';
import { decodeJobs } from '../../db/schema';
import { conflict, HttpError, notFound } from '../../http/errors';
import { decodeRunInputs } from '../calls/run-inputs';
import type { CaptureDeps } from './deps';
import { latestJob, parseSettings, toDecodeJob, type CaptureRow } from './rows';

export function startDecode(deps: CaptureDeps, c: CaptureRow): DecodeJob {
  const settings = parseSettings(c.settings);
  if (!settings) throw new HttpError(422, 'Set the channel roles (PUT …/settings) before decoding this capture');
  if (deps.jobs.isBusy(c.id)) throw conflict('This capture is already being decoded; wait for the run to finish or cancel it');
  const jobId = deps.jobs.enqueue(c.id, decodeRunInputs(deps.db, c.id, settings), c.size);
  return toDecodeJob(deps.db.select().from(decodeJobs).where(eq(decodeJobs.id, jobId)).get()!);
}

export function getJob(deps: CaptureDeps, c: CaptureRow): DecodeJob {
  const job = latestJob(deps, c.id);
  if (!job) throw notFound('This capture has not been decoded yet');
  return toDecodeJob(job);
}

export function cancelJob(deps: CaptureDeps, c: CaptureRow): DecodeJob {
  const job = latestJob(deps, c.id);
  if (!job) throw notFound('This capture has not been decoded yet');
  if (job.state !== 'queued' && job.state !== 'running') throw conflict(`The latest run is already ${job.state}; there is nothing to cancel`);
  deps.jobs.cancel(c.id);
  return toDecodeJob(latestJob(deps, c.id)!);
}
