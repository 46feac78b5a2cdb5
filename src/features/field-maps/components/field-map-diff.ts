import type { FieldMapInput } from '../../../../shared/decoder/calls';

type LayoutIn = FieldMapInput['layouts'][number];
type FieldIn = LayoutIn['fields'][number];

export interface PropertyChange {
  property: string;
  from: string;
  to: string;
}

export type FieldChange =
  | { kind: 'added'; id: string; field: FieldIn; position: number }
  | { kind: 'removed'; id: string; field: FieldIn; position: number }
  | { kind: 'changed'; id: string; changes: PropertyChange[] };

export type LayoutChange =
  | { kind: 'added'; id: string; layout: LayoutIn }
  | { kind: 'removed'; id: string; layout: LayoutIn }
  | { kind: 'changed'; id: string; changes: PropertyChange[]; fields: FieldChange[] };

export interface FieldMapDiff {
  map: PropertyChange[];
  layouts: LayoutChange[];
}

/** Short, stable text of a property value for the diff ("—" when absent), in words rather than JSON. */
export function describeValue(value: unknown, property?: string): string {
  if (value === undefined || value === null) return '—';
  if (typeof value === 'string') return value;
  if (typeof value === 'number' || typeof value === 'boolean') return String(value);
  if (Array.isArray(value)) return value.length === 0 ? '(none)' : value.map((v) => describeValue(v)).join(', ');
  if (typeof value === 'object') {
    const entries = Object.entries(value as Record<string, unknown>).filter(([, v]) => v !== undefined);
    if (entries.length === 0) return '(none)';
    // value names read as the editor writes them: "0 = ok; 255 = not found"
    if (property === 'values') return entries.map(([k, v]) => `${k} = ${describeValue(v)}`).join('; ');
    if (property === 'length' && 'field' in (value as object)) {
      const { field, add } = value as { field: string; add?: number };
      return `value of ${field}${add ? ` ${add > 0 ? '+' : '−'} ${Math.abs(add)}` : ''}`;
    }
    if (property === 'offset' && 'after' in (value as object)) return `after ${(value as { after: string }).after}`;
    return entries.map(([k, v]) => `${k} ${describeValue(v, k)}`).join(', ');
  }
  return String(value);
}

function compareProps(a: Record<string, unknown>, b: Record<string, unknown>, skip: string[]): PropertyChange[] {
  const keys = [...new Set([...Object.keys(a), ...Object.keys(b)])].filter((k) => !skip.includes(k));
  const out: PropertyChange[] = [];
  for (const k of keys) {
    // compared as data, shown as words
    if (JSON.stringify(a[k] ?? null) === JSON.stringify(b[k] ?? null)) continue;
    out.push({ property: k, from: describeValue(a[k], k), to: describeValue(b[k], k) });
  }
  return out;
}

function diffFields(a: FieldIn[], b: FieldIn[]): FieldChange[] {
  const out: FieldChange[] = [];
  const aIds = a.map((f) => f.id);
  const bIds = b.map((f) => f.id);
  a.forEach((f, i) => {
    if (!bIds.includes(f.id)) out.push({ kind: 'removed', id: f.id, field: f, position: i + 1 });
  });
  b.forEach((f, i) => {
    const j = aIds.indexOf(f.id);
    if (j < 0) {
      out.push({ kind: 'added', id: f.id, field: f, position: i + 1 });
      return;
    }
    const changes = compareProps(a[j] as Record<string, unknown>, f as Record<string, unknown>, []);
    // position among the fields both versions share, so one insertion does not mark every later field as moved
    const shared = (ids: string[], other: string[]) => ids.filter((id) => other.includes(id));
    const fromPos = shared(aIds, bIds).indexOf(f.id);
    const toPos = shared(bIds, aIds).indexOf(f.id);
    if (fromPos !== toPos) changes.push({ property: 'position', from: `#${j + 1}`, to: `#${i + 1}` });
    if (changes.length) out.push({ kind: 'changed', id: f.id, changes });
  });
  return out;
}

/** What changed from document `a` to document `b`, by layout id and field id. */
export function diffFieldMaps(a: FieldMapInput, b: FieldMapInput): FieldMapDiff {
  const map = compareProps(a as Record<string, unknown>, b as Record<string, unknown>, ['layouts', 'version']);
  const layouts: LayoutChange[] = [];
  const bIds = b.layouts.map((l) => l.id);
  for (const l of a.layouts) if (!bIds.includes(l.id)) layouts.push({ kind: 'removed', id: l.id, layout: l });
  for (const l of b.layouts) {
    const before = a.layouts.find((x) => x.id === l.id);
    if (!before) {
      layouts.push({ kind: 'added', id: l.id, layout: l });
      continue;
    }
    const changes = compareProps(before as Record<string, unknown>, l as Record<string, unknown>, ['fields']);
    const fields = diffFields(before.fields, l.fields);
    if (changes.length || fields.length) layouts.push({ kind: 'changed', id: l.id, changes, fields });
  }
  return { map, layouts };
}

export function isEmptyDiff(d: FieldMapDiff): boolean {
  return d.map.length === 0 && d.layouts.length === 0;
}
