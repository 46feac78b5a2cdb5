// Frames as stored (frames table) rebuilt into what the call layer reads: the link decode comes
// back from its columns, the octets from the blob.
import type { DecodedFrame, FrameStatus } from '../../shared/decoder/types';
import { payloadLength } from './run-writer';

export interface StoredFrameRow {
  id: number;
  link: string;
  seq: number;
  firstSample: number;
  lastSample: number;
  t: number;
  status: FrameStatus;
  address: number | null;
  control: number | null;
  kind: 'I' | 'S' | 'U' | null;
  command: string | null;
  ns: number | null;
  nr: number | null;
  pf: number | null;
  infoLength: number;
  bytes: Buffer;
}

/** A stored frame as the call layer reads it (the link decode rebuilt from its columns). */
export function frameFromRow(r: StoredFrameRow): DecodedFrame {
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
            pf: r.pf === 1,
            infoOffset: Math.max(0, payload - r.infoLength),
            infoLength: r.infoLength,
          },
  } as unknown as DecodedFrame;
}

export const FRAME_COLUMNS = `id, link, seq, first_sample as firstSample, last_sample as lastSample, t, status, address, control, kind, command, ns, nr, pf,
  info_length as infoLength, bytes`;

