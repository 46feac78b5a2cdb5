// A rig's field maps: list, read a version, create (new or copy), save a new version with an
// optimistic check of the version the editor opened, Markdown export.
import { fieldMapToMarkdown, parseFieldMap, validateFieldMap } from '../../../shared/decoder/calls';
import type { FieldMapCreate, FieldMapDetail, FieldMapSave, FieldMapSummary } from '../../../shared/schemas';
import { and, asc, desc, eq, sql } from 'drizzle-orm';
import { prepared } from '../../db/prepared';
import { fieldMaps, fieldMapVersions, users } from '../../db/schema';
import { ensureBuiltInMap } from './field-map-store';
import { badRequest, conflict, notFound } from '../../http/errors';
import type { CallsModule } from './module';
import { markdownWithFieldNotes } from '../field-notes';
import type { RowOf } from '../../db/rows';

const mapColumns = {
  id: fieldMaps.id,
  rigId: fieldMaps.rigId,
  name: fieldMaps.name,
  builtIn: fieldMaps.builtIn,
  latestVersion: fieldMaps.latestVersion,
  updatedAt: fieldMaps.updatedAt,
};
type MapRow = RowOf<typeof mapColumns>;
const ph = sql.placeholder;

export function findMap(m: CallsModule, rigId: number, mapId: number): MapRow {
  ensureBuiltInMap(m.db, rigId);
  const row = prepared(m.db, 'field map of a rig', () =>
    m.db
      .select(mapColumns)
      .from(fieldMaps)
      .where(and(eq(fieldMaps.id, ph('mapId')), eq(fieldMaps.rigId, ph('rigId'))))
      .prepare(),
  ).get({ mapId, rigId });
  if (!row) throw notFound(`No field map with id ${mapId} on this rig`);
  return row;
}

function versionDocument(m: CallsModule, mapId: number, version: number): string {
  const doc = prepared(m.db, 'field map version document', () =>
    m.db
      .select({ document: fieldMapVersions.document })
      .from(fieldMapVersions)
      .where(and(eq(fieldMapVersions.mapId, ph('mapId')), eq(fieldMapVersions.version, ph('version'))))
      .prepare(),
  ).get({ mapId, version })?.document;
  if (doc === undefined) throw notFound(`This field map has no version ${version}`);
  return doc;
}

export function listFieldMaps(m: CallsModule, rigId: number): FieldMapSummary[] {
  ensureBuiltInMap(m.db, rigId);
  // who saved the latest version: (map, version) is unique, so the join keeps one row per map
  const rows = m.db
    .select({ ...mapColumns, updatedBy: users.name })
    .from(fieldMaps)
    .leftJoin(fieldMapVersions, and(eq(fieldMapVersions.mapId, fieldMaps.id), eq(fieldMapVersions.version, fieldMaps.latestVersion)))
    .leftJoin(users, eq(users.id, fieldMapVersions.createdBy))
    .where(eq(fieldMaps.rigId, rigId))
    .orderBy(desc(fieldMaps.builtIn), sql`${fieldMaps.name} collate nocase`, asc(fieldMaps.id))
    .all();
  return rows.map((r) => ({
    id: r.id,
    name: r.name,
    version: r.latestVersion,
    builtIn: r.builtIn,
    updatedAt: r.updatedAt.toISOString(),
    updatedBy: r.builtIn ? null : r.updatedBy,
  }));
}

export function fieldMapDetail(m: CallsModule, rigId: number, mapId: number, version?: number): FieldMapDetail {
  const map = findMap(m, rigId, mapId);
  const v = version ?? map.latestVersion;
  const doc = versionDocument(m, mapId, v);
  const versions = m.db
    .select({ version: fieldMapVersions.version, createdAt: fieldMapVersions.createdAt, createdBy: users.name })
    .from(fieldMapVersions)
    .leftJoin(users, eq(users.id, fieldMapVersions.createdBy))
    .where(eq(fieldMapVersions.mapId, mapId))
    .orderBy(desc(fieldMapVersions.version))
    .all();
  return {
    id: map.id,
    name: map.name,
    version: v,
    latestVersion: map.latestVersion,
    builtIn: map.builtIn,
    document: JSON.parse(doc),
    versions: versions.map((x) => ({ version: x.version, createdAt: x.createdAt.toISOString(), createdBy: x.createdBy })),
  };
}

export function fieldMapMarkdown(m: CallsModule, rigId: number, mapId: number, version?: number): { name: string; markdown: string } {
  const map = findMap(m, rigId, mapId);
  const doc = parseFieldMap(JSON.parse(versionDocument(m, mapId, version ?? map.latestVersion)));
  return { name: map.name, markdown: markdownWithFieldNotes(m, rigId, mapId, doc, fieldMapToMarkdown(doc)) };
}

/** The document with the server's name and version, validated; 400 names each offending path. */
function checkedDocument(document: unknown, name: string, version: number): Record<string, unknown> {
  if (typeof document !== 'object' || document === null || Array.isArray(document)) {
    throw badRequest('Some fields need attention', { document: 'Send the field map document as a JSON object' });
  }
  const doc = { ...(document as Record<string, unknown>), name, version };
  const result = validateFieldMap(doc);
  if (!result.ok) {
    const fields: Record<string, string> = {};
    for (const e of result.errors) fields[e.path ? `document.${e.path}` : 'document'] ??= e.message;
    const first = result.errors[0];
    throw badRequest(`The field map does not validate: ${first.path || 'the document'}: ${first.message}`, fields);
  }
  return doc;
}

export function createFieldMap(m: CallsModule, rigId: number, userId: number, body: FieldMapCreate): FieldMapDetail {
  let source: unknown = body.document;
  if (body.copyOf !== undefined) {
    const from = findMap(m, rigId, body.copyOf);
    source = JSON.parse(versionDocument(m, from.id, body.copyVersion ?? from.latestVersion));
  }
  const doc = checkedDocument(source, body.name, 1);
  const now = new Date();
  const id = m.db.transaction(
    (tx) => {
      const mapId = tx
        .insert(fieldMaps)
        .values({ rigId, name: body.name, builtIn: false, latestVersion: 1, createdAt: now, updatedAt: now })
        .returning({ id: fieldMaps.id })
        .get().id;
      tx.insert(fieldMapVersions).values({ mapId, version: 1, document: JSON.stringify(doc), createdBy: userId, createdAt: now }).run();
      return mapId;
    },
    { behavior: 'immediate' },
  );
  return fieldMapDetail(m, rigId, id);
}

export function saveFieldMap(m: CallsModule, rigId: number, mapId: number, userId: number, body: FieldMapSave): FieldMapDetail {
  const map = findMap(m, rigId, mapId);
  if (map.builtIn) throw conflict('The built-in map is read-only; copy it to change it');
  const name = body.name ?? map.name;
  m.db.transaction(
    (tx) => {
      const latest = tx.select({ v: fieldMaps.latestVersion }).from(fieldMaps).where(eq(fieldMaps.id, mapId)).get()!.v;
      if (body.baseVersion !== latest) {
        throw conflict(
          body.baseVersion < latest
            ? `Someone saved version ${latest} since you opened version ${body.baseVersion}; reload it and apply your changes again`
            : `Version ${body.baseVersion} does not exist yet; the latest is ${latest}`,
        );
      }
      const doc = checkedDocument(body.document, name, latest + 1);
      const now = new Date();
      tx.insert(fieldMapVersions).values({ mapId, version: latest + 1, document: JSON.stringify(doc), createdBy: userId, createdAt: now }).run();
      tx.update(fieldMaps).set({ latestVersion: latest + 1, name, updatedAt: now }).where(eq(fieldMaps.id, mapId)).run();
    },
    { behavior: 'immediate' },
  );
  return fieldMapDetail(m, rigId, mapId);
}
