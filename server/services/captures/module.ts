import type Database from 'better-sqlite3';
import type { Db } from '../../db/client';
import { DecodeQueue } from '../../runs/decode-queue';
import { createCaptureStore } from '../../storage/capture-store';
import type { CaptureDeps } from './deps';
import { registerHexMatch } from './hex-pattern';
import { TimelineReader } from './timeline';
import { createTimelineReads, type TimelineReads } from './timeline-reads';
import { readThreads } from '../../db/read-pool';

/** default upload limit: 2 GB, or FLAGLINE_MAX_UPLOAD_BYTES */
export function defaultMaxUploadBytes(): number {
  const raw = process.env.FLAGLINE_MAX_UPLOAD_BYTES;
  return raw && /^\d+$/.test(raw) ? Number(raw) : 2 * 1024 ** 3;
}

export interface CaptureModule extends CaptureDeps {
  timeline: TimelineReader;
  /** the timeline's long reads (pages, counts, exports): in the read pool, or in-thread */
  reads: TimelineReads;
}

/**
 * Wires the capture services: file store, decode queue (recovering runs a crash left behind),
 * timeline reader, and the read pool (`readThreads` workers; default from FLAGLINE_READ_THREADS
 * or the cores, 0 for reads on the request thread).
 */
export function createCaptureModule(opts: { db: Db; sqlite: Database.Database; dbPath: string; dataDir?: string; maxUploadBytes?: number; readThreads?: number }): CaptureModule {
  const store = createCaptureStore(opts.dataDir);
  registerHexMatch(opts.sqlite);
  const jobs = new DecodeQueue(opts.sqlite, opts.dbPath, store);
  jobs.recover();
  const deps: CaptureDeps = { db: opts.db, store, jobs, maxUploadBytes: opts.maxUploadBytes ?? defaultMaxUploadBytes() };
  const threads = opts.dbPath === ':memory:' ? 0 : (opts.readThreads ?? readThreads(opts.dbPath));
  return { ...deps, timeline: new TimelineReader(deps), reads: createTimelineReads({ db: opts.db, sqlite: opts.sqlite, dbPath: opts.dbPath, threads }) };
}
