// "Start a field map from these hints": a draft field-map document with the hinted fields, their
// roles and one layout per call and direction, ready for the editor. Octets no hint explains
// become plain `bytes` fields, so the draft covers every frame and the analyst names the rest.
import type { FieldMapInput, FieldRole } from '../calls/field-map';
import type { FieldHint, HintDirection, HintGroup, HintReport } from './types';

type FieldIn = FieldMapInput['layouts'][number]['fields'][number];
type LayoutIn = FieldMapInput['layouts'][number];

export interface DraftOptions {
  name?: string;
  /** hint ids to use; default: every hint that suggests a role, and names, records and text */
  chosen?: readonly string[];
}

/** roles that belong to the message header: taken from the direction's "all frames" group */
const HEADER_ROLES: FieldRole[] = ['call', 'length', 'tag', 'status'];
const PRIORITY: (FieldRole | 'text')[] = ['call', 'length', 'tag', 'status', 'file-name', 'record-number', 'record-data', 'text'];
const IDS: Partial<Record<FieldRole | 'text', string>> = {
  call: 'call',
  tag: 'tag',
  length: 'len',
  status: 'status',
  'file-name': 'name',
  'record-number': 'record',
  'record-data': 'data',
  text: 'text',
};

const hex = (v: number) => `0x${v.toString(16).toUpperCase().padStart(2, '0')}`;

const roleOf = (h: FieldHint): FieldRole | 'text' | null => (h.kind === 'text' ? 'text' : h.role);

export function draftFieldMap(report: HintReport, options: DraftOptions = {}): FieldMapInput {
  const chosen = options.chosen ? new Set(options.chosen) : null;
  const use = (h: FieldHint) => (chosen ? chosen.has(h.id) : roleOf(h) !== null);
  const all = (d: HintDirection) => report.groups.find((g) => g.direction === d && g.selector === null);
  const so = report.selectorOffset;
  const mask = report.responseMask;
  const layouts: LayoutIn[] = [];
  for (const g of report.groups) {
    if (g.selector === null) continue;
    const code = g.selector & ~mask;
    layouts.push({
      id: `${g.direction}-${hex(code).toLowerCase()}`,
      name: `call ${hex(code)} (${g.direction})`,
      when: { calls: [code], direction: g.direction },
      fields: fieldsOf(g, all(g.direction) ?? null, use, so),
    });
  }
  for (const d of ['request', 'response'] as const) {
    const a = all(d);
    if (!a) continue;
    const header = { ...a, hints: a.hints.filter((h) => HEADER_ROLES.includes(h.role as FieldRole) || h.offset === so) };
    layouts.push({ id: `other-${d}`, name: `other calls (${d})`, when: { direction: d }, fields: fieldsOf(header, null, use, so, true) });
  }
  const calls = report.calls.map((c) => ({
    code: c.selector,
    name: `call ${hex(c.selector)}`,
    ...(c.why ? { meaning: c.why } : {}),
    ...(c.file ? { file: c.file } : {}),
  }));
  const hinted = report.groups.reduce((n, g) => n + g.hints.filter(use).length, 0);
  return {
    name: options.name ?? 'Draft from field hints',
    version: 1,
    description: `Started from field hints over ${report.frames} frames (${report.requests} requests, ${report.responses} answers, ${report.pairs} pairs); ${hinted} hinted fields. Octets no hint explained are “bytes” fields to name.`,
    ...(so !== null ? { callCode: { offset: so, type: 'u8' as const, responseMask: mask } } : {}),
    calls,
    layouts: layouts.length ? layouts : [{ id: 'payload', fields: [{ id: 'payload', type: 'bytes', length: 'rest' }] }],
  };
}

/** A layout's fields: the group's hints (and the header hints of its direction), gaps as bytes. */
function fieldsOf(g: HintGroup, header: HintGroup | null, use: (h: FieldHint) => boolean, so: number | null, restAlways = false): FieldIn[] {
  const candidates = [...g.hints.filter(use)];
  if (header) for (const h of header.hints) if (use(h) && HEADER_ROLES.includes(h.role as FieldRole)) candidates.push(h);
  // the selector octet is the call code, whatever the hints say about it
  if (so !== null && !candidates.some((h) => h.offset === so && h.role === 'call')) {
    candidates.push({ id: 'selector', kind: 'constant', offset: so, length: 1, type: 'u8', role: 'call', confidence: 1, summary: '', support: 0, contradict: 0, supporting: [], contradicting: [] });
  }
  const rank = (h: FieldHint) => {
    const r = roleOf(h);
    const p = r ? PRIORITY.indexOf(r) : -1;
    return p < 0 ? PRIORITY.length : p;
  };
  candidates.sort((a, b) => rank(a) - rank(b) || b.confidence - a.confidence);
  const accepted: FieldHint[] = [];
  const roles = new Set<string>();
  const maxLength = g.lengths.reduce((m, l) => Math.max(m, l.length), 0);
  const span = (h: FieldHint): [number, number] => [h.offset, h.toEnd || h.kind === 'text' ? Math.max(maxLength, h.offset + 1) : h.offset + h.length];
  for (const h of candidates) {
    const r = roleOf(h);
    if (r && roles.has(r)) continue;
    const [a, b] = span(h);
    if (accepted.some((x) => {
      const [c, d] = span(x);
      return a < d && b > c;
    })) continue;
    accepted.push(h);
    if (r) roles.add(r);
  }
  accepted.sort((a, b) => a.offset - b.offset);
  const fields: FieldIn[] = [];
  const ids = new Set<string>();
  const idFor = (h: FieldHint) => {
    const r = roleOf(h);
    let id = (r && IDS[r]) || `f${h.offset}`;
    while (ids.has(id)) id += '_';
    ids.add(id);
    return id;
  };
  let at = 0;
  let open = false;
  for (const h of accepted) {
    if (h.offset > at) fields.push({ id: `f${at}`, offset: at, type: 'bytes', length: h.offset - at, meaning: 'not explained by any hint' });
    const r = roleOf(h);
    const f: FieldIn = { id: idFor(h), offset: h.offset, type: h.type, meaning: h.summary || undefined };
    if (r && r !== 'text') f.role = r;
    if (h.kind === 'length' && h.lengthAdd) f.lengthAdd = h.lengthAdd;
    if (h.toEnd || h.kind === 'text') {
      f.length = 'rest';
      open = true;
    } else if (h.type === 'bytes' || h.type === 'ascii') f.length = h.length;
    if (h.type === 'cpm-name' && r !== 'file-name') delete f.role;
    fields.push(f);
    if (open) break;
    at = h.offset + h.length;
  }
  if (!open && (maxLength > at || restAlways)) fields.push({ id: ids.has('rest') ? 'rest_' : 'rest', offset: at, type: 'bytes', length: 'rest', meaning: 'not explained by any hint' });
  for (const f of fields) if (f.meaning === undefined) delete f.meaning;
  return fields;
}
