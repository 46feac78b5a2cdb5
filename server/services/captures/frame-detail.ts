import type { FrameDetail } from '../../../shared/schemas';
import { notFound } from '../../http/errors';
import { payloadLength } from '../../runs/run-writer';
import type { CaptureDeps } from './deps';
import type { TimelineReader } from './timeline';

export interface FrameRecord {
  id: number;
  jobId: number;
  link: string;
  seq: number;
  firstSample: number;
  lastSample: number;
  t: number;
  tEnd: number;
  status: FrameDetail['frame']['status'];
  address: number | null;
  kind: FrameDetail['frame']['kind'];
  command: string | null;
  ns: number | null;
  nr: number | null;
  pf: number | null;
  infoLength: number;
  bitLength: number;
  bytes: Buffer;
  fcsReceived: number | null;
  fcsComputed: number | null;
  flippedBit: number | null;
  stuffed: string;
  hex: string;
}

/** A frame of the capture's visible run (frames of other runs are not addressable). */
export function findFrame(deps: CaptureDeps, jobId: number | null, frameId: number): FrameRecord {
  const row =
    jobId === null
      ? undefined
      : (deps.sqlite
          .prepare(
            `select id, job_id as jobId, link, seq, first_sample as firstSample, last_sample as lastSample, t, t_end as tEnd, status, address,
               kind, command, ns, nr, pf, info_length as infoLength, bit_length as bitLength, bytes, fcs_received as fcsReceived,
               fcs_computed as fcsComputed, flipped_bit as flippedBit, stuffed, hex
             from frames where id = ? and job_id = ?`,
          )
          .get(frameId, jobId) as FrameRecord | undefined);
  if (!row) throw notFound(`No frame with id ${frameId} in this capture's decoded frames`);
  return row;
}

export function frameDetail(deps: CaptureDeps, timeline: TimelineReader, rigId: number, f: FrameRecord): FrameDetail {
  const names = timeline.stationNames(rigId);
  const base = timeline.toFrame({ ...f, hex: f.hex.slice(0, 128) }, names);
  const neighbour = (op: '<' | '>', order: 'asc' | 'desc') =>
    (
      deps.sqlite
        .prepare(`select id from frames where job_id = ? and link = ? and (t, id) ${op} (?, ?) order by t ${order}, id ${order} limit 1`)
        .get(f.jobId, f.link, f.t, f.id) as { id: number } | undefined
    )?.id ?? null;
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
    prevId: neighbour('<', 'desc'),
    nextId: neighbour('>', 'asc'),
  };
}
