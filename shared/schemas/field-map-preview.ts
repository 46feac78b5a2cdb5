// The field-map editor's preview: in one answer, the captures it can preview on, the first I frames
// of one with every octet, and a frame asked for by id. The draft map is applied in the browser.
import { z } from 'zod';
import type { frameKindSchema, frameStatusSchema } from './captures';

const positiveId = (what: string) =>
  z.coerce
    .number({ error: `Give the ${what} as its id, a whole number` })
    .int(`Give the ${what} as its id, a whole number`)
    .positive(`A ${what} id is 1 or more`);

/** GET …/field-maps/preview-frames?capture=&frame=&limit= */
export const previewFramesQuerySchema = z.object({
  /** default: the rig's newest capture with decoded frames */
  capture: positiveId('capture').optional(),
  /** a frame of that capture to send whole as well (one typed by id, or named in the page's link) */
  frame: positiveId('frame').optional(),
  /** how many I frames from the start of the capture */
  limit: z.coerce
    .number({ error: 'Give the number of frames as a whole number' })
    .int('Give the number of frames as a whole number')
    .min(1, 'Ask for at least 1 frame')
    .max(100, 'Ask for at most 100 frames')
    .default(20),
});
export type PreviewFramesQuery = z.infer<typeof previewFramesQuerySchema>;

export interface PreviewFrame {
  id: number;
  link: string;
  seq: number;
  t: number;
  status: z.infer<typeof frameStatusSchema>;
  kind: z.infer<typeof frameKindSchema> | null;
  address: number | null;
  infoLength: number;
  summary: string;
  /** every octet between the flags, FCS included, lower-case hex (not cut at 64 octets as in the timeline) */
  octets: string;
  /** the octet in `octets` where the information field starts */
  infoOffset: number;
}

/** why the preview has no frame to show, in words for the page, and what the user can do about it */
export interface PreviewEmpty {
  reason: 'no-capture' | 'not-decoded' | 'no-i-frame';
  message: string;
}

export interface PreviewFrames {
  /** captures with decoded frames, newest first */
  captures: { id: number; name: string }[];
  /** the capture the frames are from: the one asked for, else the newest of `captures`; null when there is none */
  captureId: number | null;
  /** its first I frames with an information field and a good FCS, in time order */
  frames: PreviewFrame[];
  /** the frame asked for with `frame` (whether or not it is among `frames`); null when none was asked for */
  frame: PreviewFrame | null;
  /** set when `frames` is empty */
  empty: PreviewEmpty | null;
}
