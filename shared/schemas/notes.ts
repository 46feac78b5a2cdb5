import { z } from 'zod';

export const NOTE_BODY_MAX = 4000;

export const noteBodySchema = z
  .string()
  .trim()
  .min(1, 'Write something in the note')
  .max(NOTE_BODY_MAX, `A note holds at most ${NOTE_BODY_MAX} characters`);

const frameIdSchema = z.number().int().positive('Choose a frame');
const byteOffsetSchema = z.number().int('Byte offsets are whole numbers').min(0, 'Byte offsets start at 0');

/**
 * Where a new note is pinned. Frames are named by their id in the visible decode run; the server
 * stores link + seq so the note outlives a re-decode. Byte offsets count the frame's octets between
 * the flags (address first, FCS included); the end is inclusive.
 */
export const noteTargetInputSchema = z.discriminatedUnion('kind', [
  z.object({ kind: z.literal('capture') }),
  z.object({ kind: z.literal('frame'), frameId: frameIdSchema }),
  z
    .object({ kind: z.literal('bytes'), frameId: frameIdSchema, byteStart: byteOffsetSchema, byteEnd: byteOffsetSchema })
    .refine((t) => t.byteEnd >= t.byteStart, { path: ['byteEnd'], message: 'The last byte comes before the first' }),
]);
export type NoteTargetInput = z.infer<typeof noteTargetInputSchema>;

export const noteInputSchema = z.strictObject({ target: noteTargetInputSchema, body: noteBodySchema });
export type NoteInput = z.infer<typeof noteInputSchema>;

export const notePatchSchema = z.strictObject({ body: noteBodySchema });
export type NotePatch = z.infer<typeof notePatchSchema>;

/** GET …/notes query: one frame (by id in the visible run, or by link + seq), and/or text in the body */
export const noteQuerySchema = z.object({
  frameId: z.coerce.number().int().positive().optional(),
  link: z.string().min(1).optional(),
  seq: z.coerce.number().int().min(0).optional(),
  q: z.string().trim().max(200).optional(),
});
export type NoteQuery = z.infer<typeof noteQuerySchema>;

/**
 * A note on a field of a field map (a rig-level note, POST …/field-maps/:mapId/notes). The field is
 * named "layout id.field id" (e.g. "read-seq.record"); ids have no dots, so the path is unambiguous.
 * It must name a field of the map's latest version; fieldMapId, when sent, must be the map of the URL.
 */
export const fieldNoteInputSchema = z.strictObject({
  target: z.strictObject({
    kind: z.literal('field'),
    fieldMapId: z.number().int().positive().optional(),
    fieldPath: z.string().trim().min(1, 'Name the field as layout id.field id').max(81, 'A field path is a layout id, a dot and a field id'),
  }),
  body: noteBodySchema,
});
export type FieldNoteInput = z.infer<typeof fieldNoteInputSchema>;

/** GET …/field-maps/:mapId/notes query: the notes of one field, or all of the map's */
export const fieldNoteQuerySchema = z.object({ fieldPath: z.string().trim().min(1).max(81).optional() });
export type FieldNoteQuery = z.infer<typeof fieldNoteQuerySchema>;

export const NOTE_TARGET_KINDS = ['capture', 'frame', 'bytes', 'field'] as const;
export type NoteTargetKind = (typeof NOTE_TARGET_KINDS)[number];

export interface Note {
  id: number;
  /** null for a note on a field-map field (it belongs to the rig) */
  captureId: number | null;
  target: {
    kind: NoteTargetKind;
    link: string | null;
    seq: number | null;
    byteStart: number | null;
    byteEnd: number | null;
    /** the frame with this link + seq in the visible decode run; null when the run has none */
    frameId: number | null;
    fieldMapId: number | null;
    fieldPath: string | null;
  };
  body: string;
  author: { id: number; name: string } | null;
  createdAt: string;
  updatedAt: string;
  /** what the caller may do: edit (author), delete (author or owner) */
  canEdit: boolean;
  canDelete: boolean;
}
