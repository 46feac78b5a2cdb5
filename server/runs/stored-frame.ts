// Frames as stored (frames table) rebuilt into what the call layer reads (CallLayerFrame): the
// link decode comes back from its columns, the octets from the blob. No cast: the decoder's
// call functions take the narrow frame they read.
import { and, eq, gt, or, sql } from 'drizzle-orm';
import type { CallLayerFrame } from '../../shared/decoder/calls';
import type { Db } from '../db/client';
import { frames } from '../db/schema';
import { payloadLength } from './run-writer';

/** the frames columns the call layer needs */
export const storedFrameColumns = {
  id: frames.id,
  link: frames.link,
  seq: frames.seq,
  firstSample: frames.firstSample,
  lastSample: frames.lastSample,
  t: frames.t,
  status: frames.status,
  address: frames.address,
  control: frames.control,
  kind: frames.kind,
  command: frames.command,
  ns: frames.ns,
  nr: frames.nr,
  pf: frames.pf,
  infoLength: frames.infoLength,
  bytes: frames.bytes,
};
export type StoredFrameRow = Pick<typeof frames.$inferSelect, keyof typeof storedFrameColumns>;

/** A stored frame as the call layer reads it (the link decode rebuilt from its columns). */
export function frameFromRow(r: StoredFrameRow): CallLayerFrame {
  const bytes = new Uint8Array(r.bytes.buffer, r.bytes.byteOffset, r.bytes.length);
  const payload = payloadLength({ bytes, status: r.status });
  return {
    link: r.link,
    seq: r.seq,
    firstSample: r.firstSample,
    lastSample: r.lastSample,
    status: r.status,
    bytes,
    decode:
      r.kind === null || r.address === null || r.control === null
        ? null
        : {
            address: r.address,
            control: r.control,
            kind: r.kind,
            command: r.command ?? '?',
            ns: r.ns,
            nr: r.nr,
            pf: r.pf === true,
            infoOffset: Math.max(0, payload - r.infoLength),
            infoLength: r.infoLength,
          },
  };
}

/** One frame of a decode run by id (the inspector's call decode). */
export function storedFrame(db: Db, jobId: number, frameId: number): StoredFrameRow | undefined {
  return db
    .select(storedFrameColumns)
    .from(frames)
    .where(and(eq(frames.id, frameId), eq(frames.jobId, jobId)))
    .get();
}

/** A prepared page of a run's frames in (t, id) order after a keyset position. */
export function storedFramePages(db: Db, pageSize: number) {
  const after = { jobId: sql.placeholder('jobId'), t: sql.placeholder('t'), id: sql.placeholder('id') };
  return db
    .select(storedFrameColumns)
    .from(frames)
    .where(and(eq(frames.jobId, after.jobId), or(gt(frames.t, after.t), and(eq(frames.t, after.t), gt(frames.id, after.id)))))
    .orderBy(frames.t, frames.id)
    .limit(pageSize)
    .prepare();
}
