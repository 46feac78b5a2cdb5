// A rig's field maps: list, read a version, create (new or copy), save a new version with an
// optimistic check of the version the editor opened, Markdown export.
import { fieldMapToMarkdown, parseFieldMap, validateFieldMap } from '../../../shared/decoder/calls';
import type { FieldMapCreate, FieldMapDetail, FieldMapSave, FieldMapSummary } from '../../../shared/schemas';
import { ensureBuiltInMap } from './field-map-store';
import { badRequest, conflict, notFound } from '../../http/errors';
import type { CallsModule } from './module';
import { markdownWithFieldNotes } from '../field-notes';

interface MapRow {
  id: number;
  rigId: number;
  name: string;
  builtIn: number;
  latestVersion: number;
  updatedAt: number;
}

const MAP_COLUMNS = 'id, rig_id as rigId, name, built_in as builtIn, latest_version as latestVersion, updated_at as updatedAt';

export function findMap(m: CallsModule, rigId: number, mapId: number): MapRow {
  ensureBuiltInMap(m.sqlite, rigId);
  const row = m.sqlite.prepare(`select ${MAP_COLUMNS} from field_maps where id = ? and rig_id = ?`).get(mapId, rigId) as MapRow | undefined;
  if (!row) throw notFound(`No field map with id ${mapId} on this rig`);
  return row;
}

function versionDocument(m: CallsModule, mapId: number, version: number): string {
  const doc = m.sqlite.prepare('select document from field_map_versions where map_id = ? and version = ?').pluck().get(mapId, version) as string | undefined;
  if (doc === undefined) throw notFound(`This field map has no version ${version}`);
  return doc;
}

export function listFieldMaps(m: CallsModule, rigId: number): FieldMapSummary[] {
  ensureBuiltInMap(m.sqlite, rigId);
  const rows = m.sqlite
    .prepare(
      `select ${MAP_COLUMNS},
         (select u.name from field_map_versions v left join users u on u.id = v.created_by where v.map_id = f.id and v.version = f.latest_version) as updatedBy
       from field_maps f where rig_id = ? order by built_in desc, name collate nocase, id`,
    )
    .all(rigId) as (MapRow & { updatedBy: string | null })[];
  return rows.map((r) => ({
    id: r.id,
    name: r.name,
    version: r.latestVersion,
    builtIn: r.builtIn === 1,
    updatedAt: new Date(r.updatedAt).toISOString(),
    updatedBy: r.builtIn === 1 ? null : r.updatedBy,
  }));
}

export function fieldMapDetail(m: CallsModule, rigId: number, mapId: number, version?: number): FieldMapDetail {
  const map = findMap(m, rigId, mapId);
  const v = version ?? map.latestVersion;
  const doc = versionDocument(m, mapId, v);
  const versions = m.sqlite
    .prepare(
      `select v.version, v.created_at as createdAt, u.name as createdBy from field_map_versions v left join users u on u.id = v.created_by
       where v.map_id = ? order by v.version desc`,
    )
    .all(mapId) as { version: number; createdAt: number; createdBy: string | null }[];
  return {
    id: map.id,
    name: map.name,
    version: v,
    latestVersion: map.latestVersion,
    builtIn: map.builtIn === 1,
    document: JSON.parse(doc),
    versions: versions.map((x) => ({ version: x.version, createdAt: new Date(x.createdAt).toISOString(), createdBy: x.createdBy })),
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
  const now = Date.now();
  const id = m.sqlite.transaction(() => {
    const mapId = Number(
      m.sqlite
        .prepare('insert into field_maps (rig_id, name, built_in, latest_version, created_at, updated_at) values (?, ?, 0, 1, ?, ?)')
        .run(rigId, body.name, now, now).lastInsertRowid,
    );
    m.sqlite.prepare('insert into field_map_versions (map_id, version, document, created_by, created_at) values (?, 1, ?, ?, ?)').run(mapId, JSON.stringify(doc), userId, now);
    return mapId;
  }).immediate();
  return fieldMapDetail(m, rigId, id);
}

export function saveFieldMap(m: CallsModule, rigId: number, mapId: number, userId: number, body: FieldMapSave): FieldMapDetail {
  const map = findMap(m, rigId, mapId);
  if (map.builtIn === 1) throw conflict('The built-in map is read-only; copy it to change it');
  const name = body.name ?? map.name;
  m.sqlite.transaction(() => {
    const latest = m.sqlite.prepare('select latest_version from field_maps where id = ?').pluck().get(mapId) as number;
    if (body.baseVersion !== latest) {
      throw conflict(
        body.baseVersion < latest
          ? `Someone saved version ${latest} since you opened version ${body.baseVersion}; reload it and apply your changes again`
          : `Version ${body.baseVersion} does not exist yet; the latest is ${latest}`,
      );
    }
    const doc = checkedDocument(body.document, name, latest + 1);
    const now = Date.now();
    m.sqlite.prepare('insert into field_map_versions (map_id, version, document, created_by, created_at) values (?, ?, ?, ?, ?)').run(mapId, latest + 1, JSON.stringify(doc), userId, now);
    m.sqlite.prepare('update field_maps set latest_version = ?, name = ?, updated_at = ? where id = ?').run(latest + 1, name, now, mapId);
  }).immediate();
  return fieldMapDetail(m, rigId, mapId);
}
