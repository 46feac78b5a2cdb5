import type { FieldMapInput } from '../../../../shared/decoder/calls';

// Immutable edits of the draft document; the editor keeps the whole document in one state value
// so validation and the preview always see what the user sees.

export type LayoutIn = FieldMapInput['layouts'][number];
export type FieldIn = LayoutIn['fields'][number];

function move<T>(list: T[], from: number, to: number): T[] {
  if (to < 0 || to >= list.length) return list;
  const out = list.slice();
  const [item] = out.splice(from, 1);
  out.splice(to, 0, item);
  return out;
}

function withLayouts(doc: FieldMapInput, layouts: LayoutIn[]): FieldMapInput {
  return { ...doc, layouts };
}

export function updateLayout(doc: FieldMapInput, li: number, patch: Partial<LayoutIn>): FieldMapInput {
  return withLayouts(doc, doc.layouts.map((l, i) => (i === li ? dropUndefined({ ...l, ...patch }) : l)));
}

export function moveLayout(doc: FieldMapInput, li: number, by: -1 | 1): FieldMapInput {
  return withLayouts(doc, move(doc.layouts, li, li + by));
}

export function removeLayout(doc: FieldMapInput, li: number): FieldMapInput {
  return withLayouts(doc, doc.layouts.filter((_, i) => i !== li));
}

function freeId(taken: string[], base: string): string {
  if (!taken.includes(base)) return base;
  for (let n = 2; ; n++) if (!taken.includes(`${base}${n}`)) return `${base}${n}`;
}

export function addLayout(doc: FieldMapInput): FieldMapInput {
  const id = freeId(doc.layouts.map((l) => l.id), 'layout');
  return withLayouts(doc, [...doc.layouts, { id, name: 'New layout', fields: [{ id: 'field', type: 'u8' }] }]);
}

export function updateField(doc: FieldMapInput, li: number, fi: number, patch: Partial<FieldIn>): FieldMapInput {
  const layout = doc.layouts[li];
  return updateLayout(doc, li, { fields: layout.fields.map((f, i) => (i === fi ? dropUndefined({ ...f, ...patch }) : f)) });
}

export function moveField(doc: FieldMapInput, li: number, fi: number, by: -1 | 1): FieldMapInput {
  return updateLayout(doc, li, { fields: move(doc.layouts[li].fields, fi, fi + by) });
}

export function removeField(doc: FieldMapInput, li: number, fi: number): FieldMapInput {
  return updateLayout(doc, li, { fields: doc.layouts[li].fields.filter((_, i) => i !== fi) });
}

/** Appends a one-octet field with an id no other field of the layout uses. */
export function addField(doc: FieldMapInput, li: number): FieldMapInput {
  const fields = doc.layouts[li].fields;
  const id = freeId(fields.map((f) => f.id), 'field');
  return updateLayout(doc, li, { fields: [...fields, { id, type: 'u8' }] });
}

/** Keys set to undefined are removed, so the document never carries them (the schema is strict). */
function dropUndefined<T extends object>(o: T): T {
  const out = { ...o } as Record<string, unknown>;
  for (const k of Object.keys(out)) if (out[k] === undefined) delete out[k];
  return out as T;
}

/** A parsed JSON value that has the shape the editor can show (its contents are validated separately). */
export function looksLikeFieldMap(value: unknown): value is FieldMapInput {
  if (!value || typeof value !== 'object' || Array.isArray(value)) return false;
  const layouts = (value as { layouts?: unknown }).layouts;
  return (
    Array.isArray(layouts) &&
    layouts.every((l) => l && typeof l === 'object' && Array.isArray((l as { fields?: unknown }).fields) && (l as { fields: unknown[] }).fields.every((f) => f && typeof f === 'object'))
  );
}
