import { and, asc, desc, eq, getTableColumns, sql } from 'drizzle-orm';
import type { FrameDetail } from '../../../shared/schemas';
import { prepared } from '../../db/prepared';
import { frames } from '../../db/schema';
import { notFound } from '../../http/errors';
import { payloadLength } from '../../runs/run-writer';
import type { CaptureDeps } from './deps';
import type { TimelineReader } from './timeline';

// every stored field of a frame but the search text and the columns the inspector does not show
const { captureId: _captureId, control: _control, text: _text, ...recordColumns } = getTableColumns(frames);

/** a frame of a decode run as the inspector and the waveform window read it */
export type FrameRecord = Omit<typeof frames.$inferSelect, 'captureId' | 'control' | 'text'>;

const ph = sql.placeholder;

/** A frame of the capture's visible run (frames of other runs are not addressable). */
export function findFrame(deps: Pick<CaptureDeps, 'db'>, jobId: number | null, frameId: number): FrameRecord {
  const row =
    jobId === null
      ? undefined
      : prepared(deps.db, 'frame by id', () =>
          deps.db
            .select(recordColumns)
            .from(frames)
            .where(and(eq(frames.id, ph('frameId')), eq(frames.jobId, ph('jobId'))))
            .prepare(),
        ).get({ frameId, jobId });
  if (!row) throw notFound(`No frame with id ${frameId} in this capture's decoded frames`);
  return row;
}

/** the frame before (prev) or after (next) one on its link, in timeline order */
function neighbour(deps: Pick<CaptureDeps, 'db'>, f: FrameRecord, dir: 'prev' | 'next'): number | null {
  const next = dir === 'next';
  const stmt = prepared(deps.db, `frame neighbour ${dir}`, () =>
    deps.db
      .select({ id: frames.id })
      .from(frames)
      .where(
        and(
          eq(frames.jobId, ph('jobId')),
          eq(frames.link, ph('link')),
          next ? sql`(${frames.t}, ${frames.id}) > (${ph('t')}, ${ph('id')})` : sql`(${frames.t}, ${frames.id}) < (${ph('t')}, ${ph('id')})`,
        ),
      )
      .orderBy(...(next ? [asc(frames.t), asc(frames.id)] : [desc(frames.t), desc(frames.id)]))
      .limit(1)
      .prepare(),
  );
  return stmt.get({ jobId: f.jobId, link: f.link, t: f.t, id: f.id })?.id ?? null;
}

export function frameDetail(deps: Pick<CaptureDeps, 'db'>, timeline: TimelineReader, rigId: number, f: FrameRecord): FrameDetail {
  const names = timeline.stationNames(rigId);
  const base = timeline.toFrame({ ...f, hex: f.hex.slice(0, 128) }, names);
  return {
    frame: {
      ...base,
      // the full address..info in the inspector, not the list's 64 octets
      hex: f.bytes.toString('hex', 0, payloadLength({ bytes: f.bytes, status: f.status })),
      firstSample: f.firstSample,
      lastSample: f.lastSample,
      bitLength: f.bitLength,
      hexAll: f.bytes.toString('hex'),
      fcsReceived: f.fcsReceived,
      fcsComputed: f.fcsComputed,
      flippedBit: f.flippedBit,
      stuffed: JSON.parse(f.stuffed) as number[],
    },
    prevId: neighbour(deps, f, 'prev'),
    nextId: neighbour(deps, f, 'next'),
  };
}
