// The decoded-capture file: what the browser sends when it decoded a capture itself and keeps
// the samples. One JSON object per line (NDJSON), in this order:
//   header    what was decoded (name, size and SHA-256 of the original file) and how (settings)
//   frame     one frame as the deframer cut it (bytes with FCS; the server checks the FCS again)
//   event     a handshake change, idle stretch or fill flags
//   anomaly   a line anomaly for the fault desk (glitch, missing clock edge, …)
//   end       the counts of the lines above, so a truncated file is refused rather than half stored
// Our own format; the server validates every line with these schemas.
import { z } from 'zod';
import { captureSettingsSchema, frameStatusSchema, lineEventKindSchema } from './captures';
import { anomalyKindSchema } from './faults';

import { DECODED_FORMAT, DECODED_MAX_FRAME_OCTETS, DECODED_VERSION } from './decoded-format';

export { DECODED_FORMAT, DECODED_MAX_FRAME_OCTETS, DECODED_MEDIA_TYPE, DECODED_VERSION } from './decoded-format';

const sampleIndex = z.number().nonnegative().max(2 ** 53);
const hex = (max: number) =>
  z
    .string()
    .max(max * 2)
    .regex(/^(?:[0-9a-f]{2})*$/, 'Octets are written as lower-case hex pairs');

export const decodedHeaderSchema = z.object({
  type: z.literal('header'),
  format: z.literal(DECODED_FORMAT, { error: `The first line must name the format "${DECODED_FORMAT}"` }),
  version: z.literal(DECODED_VERSION, { error: `Only version ${DECODED_VERSION} of the decoded-capture format is understood` }),
  /** the original file's name, size and SHA-256 (lower-case hex): the capture's identity */
  name: z.string().trim().min(1).max(255),
  size: z.number().int().nonnegative(),
  sha256: z.string().regex(/^[0-9a-f]{64}$/, 'The SHA-256 of the original file is 64 lower-case hex digits'),
  settings: captureSettingsSchema,
  /** seconds per sample index (the reader's time base) */
  samplePeriod: z.number().positive().max(1e6),
  /** link names as the decoder named them */
  links: z.array(z.string().min(1).max(80)).max(16),
  /** bytes of the original the decoder read */
  bytesRead: z.number().int().nonnegative(),
  /** the decoder's non-fatal issues, as sentences */
  issues: z.array(z.string().max(500)).max(20).default([]),
});
export type DecodedHeader = z.infer<typeof decodedHeaderSchema>;

export const decodedFrameLineSchema = z.object({
  type: z.literal('frame'),
  link: z.string().min(1).max(80),
  seq: z.number().int().nonnegative(),
  first: sampleIndex,
  last: sampleIndex,
  /** bits after zero-bit deletion */
  bits: z.number().int().nonnegative(),
  /** every octet between the flags, FCS included */
  bytes: hex(DECODED_MAX_FRAME_OCTETS),
  /** positions of the deleted stuffing zeros */
  stuffed: z.array(z.number().int().nonnegative()).max(DECODED_MAX_FRAME_OCTETS * 2),
  /** the deframer's verdict; ok or bad FCS is decided again by the server */
  status: frameStatusSchema.exclude(['bad-fcs']),
});
export type DecodedFrameLine = z.infer<typeof decodedFrameLineSchema>;

export const decodedEventLineSchema = z.object({
  type: z.literal('event'),
  link: z.string().min(1).max(80).nullable(),
  channel: z.string().min(1).max(80),
  kind: lineEventKindSchema,
  sample: sampleIndex,
  end: sampleIndex.optional(),
  count: z.number().int().nonnegative().optional(),
});
export type DecodedEventLine = z.infer<typeof decodedEventLineSchema>;

export const decodedAnomalyLineSchema = z.object({
  type: z.literal('anomaly'),
  kind: anomalyKindSchema,
  link: z.string().min(1).max(80).nullable(),
  channel: z.string().min(1).max(80),
  sample: sampleIndex,
  end: sampleIndex,
  count: z.number().int().nonnegative(),
  bits: z.number().nonnegative(),
});
export type DecodedAnomalyLine = z.infer<typeof decodedAnomalyLineSchema>;

export const decodedEndSchema = z.object({
  type: z.literal('end'),
  frames: z.number().int().nonnegative(),
  events: z.number().int().nonnegative(),
  anomalies: z.number().int().nonnegative(),
});
export type DecodedEnd = z.infer<typeof decodedEndSchema>;

export const decodedBodyLineSchema = z.discriminatedUnion('type', [decodedFrameLineSchema, decodedEventLineSchema, decodedAnomalyLineSchema, decodedEndSchema]);
export type DecodedBodyLine = z.infer<typeof decodedBodyLineSchema>;
