import { and, asc, eq, sql, type SQL } from 'drizzle-orm';
import type { Note, NoteInput, NotePatch, NoteQuery, Role } from '../../shared/schemas';
import { prepared } from '../db/prepared';
import { frames, notes, users } from '../db/schema';
import { badRequest, forbidden, notFound } from '../http/errors';
import type { CaptureDeps } from './captures/deps';
import type { CaptureRow } from './captures/rows';

type NoteRow = typeof notes.$inferSelect;

/** Who is asking: notes are edited by their author only, deleted by their author or an owner. */
export interface NoteCaller {
  userId: number;
  role: Role;
}

const ph = sql.placeholder;

const pinColumns = { id: frames.id, link: frames.link, seq: frames.seq, size: sql<number>`length(${frames.bytes})` };

/** A frame of the capture's visible run, with its octet count (for byte ranges). */
function framePin(deps: CaptureDeps, capture: CaptureRow, frameId: number) {
  const row =
    capture.currentJobId === null
      ? undefined
      : prepared(deps.db, 'note frame pin', () =>
          deps.db
            .select(pinColumns)
            .from(frames)
            .where(and(eq(frames.id, ph('frameId')), eq(frames.jobId, ph('jobId'))))
            .prepare(),
        ).get({ frameId, jobId: capture.currentJobId });
  if (!row) throw notFound(`No frame with id ${frameId} in this capture's decoded frames`);
  return row;
}

/** link + seq → the frame id in the visible run (a re-decode gives new ids, the same link + seq) */
function currentFrameId(deps: CaptureDeps, capture: CaptureRow, link: string | null, seq: number | null): number | null {
  if (capture.currentJobId === null || link === null || seq === null) return null;
  // once per note listed: prepared per database handle
  const row = prepared(deps.db, 'note frame by link and seq', () =>
    deps.db
      .select({ id: frames.id })
      .from(frames)
      .where(and(eq(frames.jobId, ph('jobId')), eq(frames.link, ph('link')), eq(frames.seq, ph('seq'))))
      .limit(1)
      .prepare(),
  ).get({ jobId: capture.currentJobId, link, seq });
  return row?.id ?? null;
}

function toNote(deps: CaptureDeps, capture: CaptureRow, row: NoteRow, authorName: string | null, caller: NoteCaller): Note {
  const mine = row.authorId !== null && row.authorId === caller.userId;
  return {
    id: row.id,
    captureId: row.captureId,
    target: {
      kind: row.target,
      link: row.link,
      seq: row.seq,
      byteStart: row.byteStart,
      byteEnd: row.byteEnd,
      frameId: currentFrameId(deps, capture, row.link, row.seq),
      fieldMapId: row.fieldMapId,
      fieldPath: row.fieldPath,
    },
    body: row.body,
    author: row.authorId !== null && authorName !== null ? { id: row.authorId, name: authorName } : null,
    createdAt: row.createdAt.toISOString(),
    updatedAt: row.updatedAt.toISOString(),
    canEdit: mine,
    canDelete: mine || caller.role === 'owner',
  };
}

function readNotes(deps: CaptureDeps, capture: CaptureRow, where: SQL[], caller: NoteCaller): Note[] {
  return deps.db
    .select({ note: notes, authorName: users.name })
    .from(notes)
    .leftJoin(users, eq(users.id, notes.authorId))
    .where(and(eq(notes.captureId, capture.id), ...where))
    .orderBy(asc(notes.createdAt), asc(notes.id))
    .all()
    .map((r) => toNote(deps, capture, r.note, r.authorName, caller));
}

/** LIKE with the user's % and _ taken literally */
const likeEscape = (s: string) => s.replace(/[\\%_]/g, (c) => `\\${c}`);

export function listNotes(deps: CaptureDeps, capture: CaptureRow, query: NoteQuery, caller: NoteCaller): Note[] {
  const where: SQL[] = [];
  if (query.frameId !== undefined) {
    const frame = framePin(deps, capture, query.frameId);
    where.push(eq(notes.link, frame.link), eq(notes.seq, frame.seq));
  } else if (query.link !== undefined || query.seq !== undefined) {
    if (query.link === undefined || query.seq === undefined) {
      throw badRequest('Name a frame by both link and seq', { [query.link === undefined ? 'link' : 'seq']: 'This field is required with the other' });
    }
    where.push(eq(notes.link, query.link), eq(notes.seq, query.seq));
  }
  if (query.q) where.push(sql`${notes.body} like ${`%${likeEscape(query.q)}%`} escape '\\'`);
  return readNotes(deps, capture, where, caller);
}

export function createNote(deps: CaptureDeps, capture: CaptureRow, input: NoteInput, caller: NoteCaller): Note {
  const t = input.target;
  let pin: { link: string | null; seq: number | null; byteStart: number | null; byteEnd: number | null } = { link: null, seq: null, byteStart: null, byteEnd: null };
  if (t.kind !== 'capture') {
    const frame = framePin(deps, capture, t.frameId);
    pin = { link: frame.link, seq: frame.seq, byteStart: null, byteEnd: null };
    if (t.kind === 'bytes') {
      const last = frame.size - 1;
      if (t.byteStart > last) throw badRequest('The byte range lies outside the frame', { 'target.byteStart': `The frame has ${frame.size} bytes (0–${last})` });
      if (t.byteEnd > last) throw badRequest('The byte range lies outside the frame', { 'target.byteEnd': `The frame has ${frame.size} bytes (0–${last})` });
      pin = { ...pin, byteStart: t.byteStart, byteEnd: t.byteEnd };
    }
  }
  const now = new Date();
  const row = deps.db
    .insert(notes)
    // one instant for both stamps, so a new note never reads as edited
    .values({ rigId: capture.rigId, captureId: capture.id, target: t.kind, ...pin, body: input.body, authorId: caller.userId, createdAt: now, updatedAt: now })
    .returning()
    .get();
  return oneNote(deps, capture, row.id, caller);
}

function oneNote(deps: CaptureDeps, capture: CaptureRow, noteId: number, caller: NoteCaller): Note {
  const [note] = readNotes(deps, capture, [eq(notes.id, noteId)], caller);
  if (!note) throw notFound(`No note with id ${noteId} on this capture`);
  return note;
}

function findNoteRow(deps: CaptureDeps, capture: CaptureRow, noteId: number): NoteRow {
  const row = deps.db.select().from(notes).where(and(eq(notes.id, noteId), eq(notes.captureId, capture.id))).get();
  if (!row) throw notFound(`No note with id ${noteId} on this capture`);
  return row;
}

export function updateNote(deps: CaptureDeps, capture: CaptureRow, noteId: number, patch: NotePatch, caller: NoteCaller): Note {
  const row = findNoteRow(deps, capture, noteId);
  if (row.authorId !== caller.userId) throw forbidden('Only the author of a note can edit it');
  deps.db.update(notes).set({ body: patch.body, updatedAt: new Date() }).where(eq(notes.id, row.id)).run();
  return oneNote(deps, capture, row.id, caller);
}

export function deleteNote(deps: CaptureDeps, capture: CaptureRow, noteId: number, caller: NoteCaller): void {
  const row = findNoteRow(deps, capture, noteId);
  if (row.authorId !== caller.userId && caller.role !== 'owner') throw forbidden('Only the author of a note or an owner of the rig can delete it');
  deps.db.delete(notes).where(eq(notes.id, row.id)).run();
}
