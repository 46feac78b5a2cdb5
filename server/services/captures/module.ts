import type Database from 'better-sqlite3';
import type { Db } from '../../db/client';
import { DecodeQueue } from '../../runs/decode-queue';
import { createCaptureStore } from '../../storage/capture-store';
import type { CaptureDeps } from './deps';
import { hexMatches } from './hex-pattern';
import { TimelineReader } from './timeline';

/** default upload limit: 2 GB, or FLAGLINE_MAX_UPLOAD_BYTES */
export function defaultMaxUploadBytes(): number {
  const raw = process.env.FLAGLINE_MAX_UPLOAD_BYTES;
  return raw && /^\d+$/.test(raw) ? Number(raw) : 2 * 1024 ** 3;
}

export interface CaptureModule extends CaptureDeps {
  timeline: TimelineReader;
}

/** Wires the capture services: file store, decode queue (recovering runs a crash left behind), timeline reader. */
export function createCaptureModule(opts: { db: Db; sqlite: Database.Database; dbPath: string; dataDir?: string; maxUploadBytes?: number }): CaptureModule {
  const store = createCaptureStore(opts.dataDir);
  // hex pattern search: alignment and ?? wildcards are checked here, after the trigram prefilter
  opts.sqlite.function('hex_match', { deterministic: true }, (hex: unknown, pattern: unknown) =>
    typeof hex === 'string' && typeof pattern === 'string' && hexMatches(hex, pattern) ? 1 : 0,
  );
  const jobs = new DecodeQueue(opts.sqlite, opts.dbPath, store);
  jobs.recover();
  const deps: CaptureDeps = { db: opts.db, store, jobs, maxUploadBytes: opts.maxUploadBytes ?? defaultMaxUploadBytes() };
  return { ...deps, timeline: new TimelineReader(deps) };
}
