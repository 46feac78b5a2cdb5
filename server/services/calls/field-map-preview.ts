// The field-map editor's preview frames in one read: the rig's decoded captures, the first I frames
// of one with all their octets, and a frame asked for by id. The editor used to chain three
// requests for this (captures → a timeline page → the frame), each waiting for the one before,
// because a timeline row carries 64 octets at most.
import { and, asc, desc, eq, gt, isNotNull, sql } from 'drizzle-orm';
import type { PreviewEmpty, PreviewFrame, PreviewFrames, PreviewFramesQuery } from '../../../shared/schemas';
import { prepared } from '../../db/prepared';
import { allRows, type RowOf } from '../../db/rows';
import { captures, frames } from '../../db/schema';
import { payloadLength } from '../../runs/run-writer';
import { findCapture } from '../captures/rows';
import { frameSummary } from '../captures/summaries';
import { findFrame } from '../captures/frame-detail';
import type { CallsModule } from './module';

const ph = sql.placeholder;

const frameColumns = {
  id: frames.id,
  link: frames.link,
  seq: frames.seq,
  t: frames.t,
  status: frames.status,
  address: frames.address,
  kind: frames.kind,
  command: frames.command,
  ns: frames.ns,
  nr: frames.nr,
  pf: frames.pf,
  infoLength: frames.infoLength,
  flippedBit: frames.flippedBit,
  bytes: frames.bytes,
};
type Row = RowOf<typeof frameColumns>;

function toPreview(r: Row, names: Map<number, string>): PreviewFrame {
  const stationName = r.address === null ? null : (names.get(r.address) ?? null);
  // the information field ends where the FCS starts; what comes before it is address and control
  const payload = payloadLength(r);
  return {
    id: r.id,
    link: r.link,
    seq: r.seq,
    t: r.t,
    status: r.status,
    kind: r.kind,
    address: r.address,
    infoLength: r.infoLength,
    summary: frameSummary({ ...r, bytes: undefined }, stationName),
    octets: r.bytes.toString('hex'),
    infoOffset: Math.max(0, payload - r.infoLength),
  };
}

/** captures of the rig with a visible decode run, newest first */
function decodedCaptures(m: CallsModule, rigId: number) {
  return prepared(m.db, 'preview captures', () =>
    m.db
      .select({ id: captures.id, name: captures.name, jobId: captures.currentJobId })
      .from(captures)
      .where(and(eq(captures.rigId, ph('rigId')), isNotNull(captures.currentJobId)))
      .orderBy(desc(captures.uploadedAt), desc(captures.id))
      .prepare(),
  ).all({ rigId });
}

function firstInformationFrames(m: CallsModule, jobId: number, limit: number): Row[] {
  const stmt = prepared(m.db, 'preview first I frames', () =>
    m.db
      .select(frameColumns)
      .from(frames)
      // walks frames_job_status_t_idx (job, status, t) in time order
      .where(and(eq(frames.jobId, ph('jobId')), eq(frames.status, 'ok'), eq(frames.kind, 'I'), gt(frames.infoLength, 0)))
      .orderBy(asc(frames.t), asc(frames.id))
      .limit(ph('limit'))
      .prepare(),
  );
  return allRows(stmt, frameColumns, { jobId, limit }) as Row[];
}

export function previewFrames(m: CallsModule, rigId: number, q: PreviewFramesQuery): PreviewFrames {
  const decoded = decodedCaptures(m, rigId);
  const names = m.timeline.stationNames(rigId);
  let captureId: number | null;
  let jobId: number | null;
  let captureName: string;
  if (q.capture !== undefined) {
    // 404 for a capture of another rig or none
    const c = findCapture(m, rigId, q.capture);
    captureId = c.id;
    jobId = c.currentJobId;
    captureName = c.name;
  } else {
    const newest = decoded[0];
    captureId = newest?.id ?? null;
    jobId = newest?.jobId ?? null;
    captureName = newest?.name ?? '';
  }
  // 404 for a frame of another capture or run, as the inspector answers
  const asked = q.frame === undefined ? null : findFrame(m, jobId, q.frame);
  const rows = jobId === null ? [] : firstInformationFrames(m, jobId, q.limit);
  return {
    captures: decoded.map(({ id, name }) => ({ id, name })),
    captureId,
    frames: rows.map((r) => toPreview(r, names)),
    frame: asked ? toPreview(asked, names) : null,
    empty: rows.length ? null : emptyReason(captureId, jobId, captureName),
  };
}

function emptyReason(captureId: number | null, jobId: number | null, name: string): PreviewEmpty {
  if (captureId === null) {
    return { reason: 'no-capture', message: 'No capture on this rig has decoded frames yet: the preview applies the map to a frame of one. Upload a capture and decode it.' };
  }
  if (jobId === null) {
    return { reason: 'not-decoded', message: `${name} has no decoded frames yet: the preview can use it once its decode finishes. Choose another capture, or open it to decode it.` };
  }
  return {
    reason: 'no-i-frame',
    message: `${name} has no I frame with an information field and a good FCS: there is no call to preview. Choose another capture, or type the id of a frame from its timeline.`,
  };
}
