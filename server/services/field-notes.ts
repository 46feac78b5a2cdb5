// Notes on a field of a field map: they belong to the rig (no capture), are named by
// "layout id.field id" and go into the map's Markdown write-up under the field's layout.
import { and, asc, eq } from 'drizzle-orm';
import { parseFieldMap, type FieldMap } from '../../shared/decoder/calls';
import type { FieldNoteInput, FieldNoteQuery, Note, NotePatch } from '../../shared/schemas';
import { fieldMaps, fieldMapVersions, notes, users } from '../db/schema';
import { badRequest, forbidden, notFound } from '../http/errors';
import { ensureBuiltInMap } from './calls/field-map-store';
import type { CaptureDeps } from './captures/deps';
import type { NoteCaller } from './notes';

type NoteRow = typeof notes.$inferSelect;

/** The map's latest document; 404 when the rig has no such map. */
export function latestFieldMap(deps: CaptureDeps, rigId: number, mapId: number): FieldMap {
  ensureBuiltInMap(deps.db, rigId);
  const doc = deps.db
    .select({ document: fieldMapVersions.document })
    .from(fieldMaps)
    .innerJoin(fieldMapVersions, and(eq(fieldMapVersions.mapId, fieldMaps.id), eq(fieldMapVersions.version, fieldMaps.latestVersion)))
    .where(and(eq(fieldMaps.id, mapId), eq(fieldMaps.rigId, rigId)))
    .get()?.document;
  if (doc === undefined) throw notFound(`No field map with id ${mapId} on this rig`);
  return parseFieldMap(JSON.parse(doc));
}

function checkFieldPath(map: FieldMap, path: string): void {
  const [layoutId, fieldId, ...rest] = path.split('.');
  const bad = (message: string) => badRequest(`The note names no field of this map: ${message}`, { 'target.fieldPath': message });
  if (fieldId === undefined || rest.length > 0) throw bad('Name the field as layout id.field id, e.g. "read-seq.record"');
  const layout = map.layouts.find((l) => l.id === layoutId);
  if (!layout) throw bad(`Version ${map.version} has no layout "${layoutId}"`);
  if (!layout.fields.some((f) => f.id === fieldId)) throw bad(`Layout "${layoutId}" of version ${map.version} has no field "${fieldId}"`);
}

function toFieldNote(row: NoteRow, authorName: string | null, caller: NoteCaller): Note {
  const mine = row.authorId !== null && row.authorId === caller.userId;
  return {
    id: row.id,
    captureId: null,
    target: { kind: 'field', link: null, seq: null, byteStart: null, byteEnd: null, frameId: null, fieldMapId: row.fieldMapId, fieldPath: row.fieldPath },
    body: row.body,
    author: row.authorId !== null && authorName !== null ? { id: row.authorId, name: authorName } : null,
    createdAt: row.createdAt.toISOString(),
    updatedAt: row.updatedAt.toISOString(),
    canEdit: mine,
    canDelete: mine || caller.role === 'owner',
  };
}

function readFieldNotes(deps: CaptureDeps, rigId: number, mapId: number, caller: NoteCaller, extra?: ReturnType<typeof eq>): Note[] {
  return deps.db
    .select({ note: notes, authorName: users.name })
    .from(notes)
    .leftJoin(users, eq(users.id, notes.authorId))
    .where(and(eq(notes.rigId, rigId), eq(notes.fieldMapId, mapId), eq(notes.target, 'field'), extra))
    .orderBy(asc(notes.createdAt), asc(notes.id))
    .all()
    .map((r) => toFieldNote(r.note, r.authorName, caller));
}

export function listFieldNotes(deps: CaptureDeps, rigId: number, mapId: number, query: FieldNoteQuery, caller: NoteCaller): Note[] {
  latestFieldMap(deps, rigId, mapId);
  return readFieldNotes(deps, rigId, mapId, caller, query.fieldPath ? eq(notes.fieldPath, query.fieldPath) : undefined);
}

export function createFieldNote(deps: CaptureDeps, rigId: number, mapId: number, input: FieldNoteInput, caller: NoteCaller): Note {
  const map = latestFieldMap(deps, rigId, mapId);
  if (input.target.fieldMapId !== undefined && input.target.fieldMapId !== mapId) {
    throw badRequest('The note names another field map', { 'target.fieldMapId': `This is field map ${mapId}` });
  }
  checkFieldPath(map, input.target.fieldPath);
  const now = new Date();
  const row = deps.db
    .insert(notes)
    // one instant for both stamps, so a new note never reads as edited
    .values({ rigId, captureId: null, target: 'field', fieldMapId: mapId, fieldPath: input.target.fieldPath, body: input.body, authorId: caller.userId, createdAt: now, updatedAt: now })
    .returning()
    .get();
  return readFieldNotes(deps, rigId, mapId, caller, eq(notes.id, row.id))[0];
}

function findFieldNote(deps: CaptureDeps, rigId: number, mapId: number, noteId: number): NoteRow {
  latestFieldMap(deps, rigId, mapId);
  const row = deps.db
    .select()
    .from(notes)
    .where(and(eq(notes.id, noteId), eq(notes.rigId, rigId), eq(notes.fieldMapId, mapId), eq(notes.target, 'field')))
    .get();
  if (!row) throw notFound(`No note with id ${noteId} on this field map`);
  return row;
}

export function updateFieldNote(deps: CaptureDeps, rigId: number, mapId: number, noteId: number, patch: NotePatch, caller: NoteCaller): Note {
  const row = findFieldNote(deps, rigId, mapId, noteId);
  if (row.authorId !== caller.userId) throw forbidden('Only the author of a note can edit it');
  deps.db.update(notes).set({ body: patch.body, updatedAt: new Date() }).where(eq(notes.id, row.id)).run();
  return readFieldNotes(deps, rigId, mapId, caller, eq(notes.id, row.id))[0];
}

export function deleteFieldNote(deps: CaptureDeps, rigId: number, mapId: number, noteId: number, caller: NoteCaller): void {
  const row = findFieldNote(deps, rigId, mapId, noteId);
  if (row.authorId !== caller.userId && caller.role !== 'owner') throw forbidden('Only the author of a note or an owner of the rig can delete it');
  deps.db.delete(notes).where(eq(notes.id, row.id)).run();
}

const oneLine = (s: string) => s.replace(/\s+/g, ' ').trim();

/**
 * The write-up with each layout's field notes appended to its section. The Markdown is cut at the
 * layout headings, which fieldMapToMarkdown writes in the map's layout order.
 */
export function markdownWithFieldNotes(deps: CaptureDeps, rigId: number, mapId: number, map: FieldMap, markdown: string): string {
  const all = deps.db
    .select({ note: notes, authorName: users.name })
    .from(notes)
    .leftJoin(users, eq(users.id, notes.authorId))
    .where(and(eq(notes.rigId, rigId), eq(notes.fieldMapId, mapId), eq(notes.target, 'field')))
    .orderBy(asc(notes.createdAt), asc(notes.id))
    .all();
  if (all.length === 0) return markdown;
  const lines = markdown.split('\n');
  const headings: number[] = [];
  let from = lines.indexOf('## Layouts');
  for (let i = 0; i < map.layouts.length; i++) {
    from = lines.findIndex((l, at) => at > from && l.startsWith('### '));
    if (from < 0) return markdown;
    headings.push(from);
  }
  const inserts: { at: number; text: string[] }[] = [];
  map.layouts.forEach((layout, li) => {
    const mine = all.filter((r) => r.note.fieldPath?.startsWith(`${layout.id}.`));
    if (mine.length === 0) return;
    const text = ['#### Notes', ''];
    for (const r of mine) {
      const fieldId = r.note.fieldPath!.slice(layout.id.length + 1);
      const field = layout.fields.find((f) => f.id === fieldId);
      text.push(`- **${field?.name ?? fieldId}** — ${r.authorName ?? 'a former member'}, ${r.note.createdAt.toISOString().slice(0, 10)}: ${oneLine(r.note.body)}`);
    }
    text.push('');
    const next = li + 1 < headings.length ? headings[li + 1] : lines.length;
    inserts.push({ at: next, text });
  });
  for (const ins of inserts.reverse()) lines.splice(ins.at, 0, ...ins.text);
  return lines.join('\n');
}
