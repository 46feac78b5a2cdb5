import type { Db } from '../../db/client';
import type { DecodeQueue } from '../../runs/decode-queue';
import type { CaptureStore } from '../../storage/capture-store';

/** What the capture services need: the database (Drizzle; driverOf gives its driver where Drizzle cannot serve), the file store, the decode queue. */
export interface CaptureDeps {
  db: Db;
  store: CaptureStore;
  jobs: DecodeQueue;
  maxUploadBytes: number;
}
