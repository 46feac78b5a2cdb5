import { and, desc, eq, sql } from 'drizzle-orm';
import { captureSettingsSchema, type CaptureSettings, type CaptureStatus, type CaptureSummaryRow, type DecodeJob } from '../../../shared/schemas';
import { prepared } from '../../db/prepared';
import { captures, decodeJobs, users } from '../../db/schema';
import { notFound } from '../../http/errors';
import type { CaptureDeps } from './deps';

export type CaptureRow = typeof captures.$inferSelect;
export type JobRow = typeof decodeJobs.$inferSelect;

function parseWarnings(json: string | null): string[] {
  if (!json) return [];
  try {
    const v: unknown = JSON.parse(json);
    return Array.isArray(v) ? v.filter((x): x is string => typeof x === 'string') : [];
  } catch {
    return [];
  }
}

export function toDecodeJob(j: JobRow): DecodeJob {
  return {
    id: j.id,
    captureId: j.captureId,
    state: j.state,
    stage: j.stage,
    bytesRead: j.bytesRead,
    bytesTotal: j.bytesTotal,
    frames: j.frames,
    error: j.error,
    warnings: parseWarnings(j.issues),
    startedAt: j.startedAt?.toISOString() ?? null,
    finishedAt: j.finishedAt?.toISOString() ?? null,
  };
}

const STATUS_OF_JOB: Record<JobRow['state'], CaptureStatus> = {
  queued: 'queued',
  running: 'decoding',
  done: 'decoded',
  failed: 'failed',
  cancelled: 'cancelled',
  interrupted: 'interrupted',
};

export function parseSettings(json: string | null): CaptureSettings | null {
  if (!json) return null;
  const r = captureSettingsSchema.safeParse(JSON.parse(json));
  return r.success ? r.data : null;
}

export function latestJob(deps: CaptureDeps, captureId: number): JobRow | undefined {
  return prepared(deps.db, 'latest decode job', () =>
    deps.db.select().from(decodeJobs).where(eq(decodeJobs.captureId, sql.placeholder('captureId'))).orderBy(desc(decodeJobs.id)).limit(1).prepare(),
  ).get({ captureId });
}

export function currentJob(deps: CaptureDeps, c: CaptureRow): JobRow | undefined {
  if (c.currentJobId === null) return undefined;
  return prepared(deps.db, 'decode job by id', () => deps.db.select().from(decodeJobs).where(eq(decodeJobs.id, sql.placeholder('jobId'))).prepare()).get({
    jobId: c.currentJobId,
  });
}

export function toSummary(deps: CaptureDeps, c: CaptureRow): CaptureSummaryRow {
  const job = latestJob(deps, c.id);
  const visible = job && job.id === c.currentJobId ? job : currentJob(deps, c);
  const uploader = c.uploadedBy === null ? undefined : deps.db.select({ name: users.name }).from(users).where(eq(users.id, c.uploadedBy)).get();
  return {
    id: c.id,
    rigId: c.rigId,
    name: c.name,
    size: c.size,
    sha256: c.sha256,
    format: c.format,
    status: job ? STATUS_OF_JOB[job.state] : 'uploaded',
    uploadedBy: uploader?.name ?? 'a former member',
    uploadedAt: c.uploadedAt.toISOString(),
    settings: parseSettings(c.settings),
    job: job ? toDecodeJob(job) : null,
    frameCount: visible?.frames ?? 0,
    samplesKept: c.samplesKept,
  };
}

/** every capture request starts here: a prepared statement per database handle */
export function findCapture(deps: CaptureDeps, rigId: number, captureId: number): CaptureRow {
  const row = prepared(deps.db, 'capture of a rig', () =>
    deps.db
      .select()
      .from(captures)
      .where(and(eq(captures.id, sql.placeholder('captureId')), eq(captures.rigId, sql.placeholder('rigId'))))
      .prepare(),
  ).get({ captureId, rigId });
  if (!row) throw notFound(`No capture with id ${captureId} on this rig`);
  return row;
}

export function listCaptures(deps: CaptureDeps, rigId: number): CaptureSummaryRow[] {
  return deps.db
    .select()
    .from(captures)
    .where(eq(captures.rigId, rigId))
    .orderBy(desc(captures.uploadedAt), desc(captures.id))
    .all()
    .map((c) => toSummary(deps, c));
}
