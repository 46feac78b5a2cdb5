import type Database from 'better-sqlite3';
import type { Db } from '../../db/client';
import type { DecodeQueue } from '../../runs/decode-queue';
import type { CaptureStore } from '../../storage/capture-store';

/** What the capture services need: the database (Drizzle and the raw handle for hot queries), the file store, the decode queue. */
export interface CaptureDeps {
  db: Db;
  sqlite: Database.Database;
  store: CaptureStore;
  jobs: DecodeQueue;
  maxUploadBytes: number;
}
