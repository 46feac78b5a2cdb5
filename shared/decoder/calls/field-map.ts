// The field map document: a named, versioned description of the information field's layout.
// Users copy the built-in map and change it, so the document is validated with zod and every
// error carries the path of the offending part ("layouts[2].fields[3].length").
//
// A map has one or more layouts. A layout applies to frames of one direction (request: station
// → server, response: server → station) and/or a set of call codes; the first matching layout
// wins, so a layout without conditions at the end serves as the fallback. The call code used to
// pick a layout is read from `callCode` before any layout is chosen.
import { z } from 'zod';

export const FIELD_TYPES = ['u8', 'u16le', 'u16be', 'u24le', 'u24be', 'bytes', 'ascii', 'cpm-name', 'bits'] as const;
export type FieldType = (typeof FIELD_TYPES)[number];

/**
 * What a field means to the call layer. `extent`, `module` and `current-record` are the CP/M
 * FCB's sequential position (ex, s2, cr): together they give the record number of sequential
 * reads and writes when no field has the `record-number` role. `length` counts the octets after
 * the field (plus the field's `lengthAdd`); a frame that disagrees is reported. `record-count` is
 * the FCB's rc (records in extent ex of module s2; in an open answer it sizes the file) and
 * `file-size` a file's size in records as the server states it (r0–r2 after compute file size).
 */
export const FIELD_ROLES = [
  'call',
  'tag',
  'user',
  'file-name',
  'record-number',
  'status',
  'record-data',
  'extent',
  'module',
  'current-record',
  'length',
  'record-count',
  'file-size',
] as const;
export type FieldRole = (typeof FIELD_ROLES)[number];

/** Octets of the fixed-size types; cpm-name is 8 name + 3 type characters. */
export const FIXED_SIZE: Partial<Record<FieldType, number>> = { u8: 1, u16le: 2, u16be: 2, u24le: 3, u24be: 3, 'cpm-name': 11 };
export const NUMERIC_TYPES: readonly FieldType[] = ['u8', 'u16le', 'u16be', 'u24le', 'u24be', 'bits'];

const identifier = z
  .string()
  .regex(/^[A-Za-z_][A-Za-z0-9_-]{0,39}$/, 'use letters, digits, - and _ (up to 40), starting with a letter');

/** Value names: keys are decimal ("15") or hex ("0x0F") numbers. */
const valueNames = z
  .record(z.string().regex(/^(0x[0-9A-Fa-f]+|[0-9]+)$/, 'a value name key is a number, decimal or 0x hex'), z.string().min(1).max(200))
  .optional();

const bitField = z.object({
  name: identifier,
  /** position of the lowest bit, 0 = least significant */
  shift: z.number().int().min(0).max(23),
  width: z.number().int().min(1).max(24).default(1),
  meaning: z.string().max(500).optional(),
  values: valueNames,
});

const offsetSchema = z.union([z.number().int().min(0).max(65535), z.object({ after: identifier }).strict()]);
const lengthSchema = z.union([
  z.number().int().min(0).max(65535),
  z.literal('rest'),
  z.object({ field: identifier, add: z.number().int().min(-65535).max(65535).default(0) }).strict(),
]);

export const fieldSchema = z
  .object({
    id: identifier,
    name: z.string().max(100).optional(),
    /** octet offset in the information field, or right after another field; default: after the previous field */
    offset: offsetSchema.optional(),
    /** octets: fixed, 'rest' of the field, or the value of an earlier numeric field (+ add) */
    length: lengthSchema.optional(),
    type: z.enum(FIELD_TYPES),
    meaning: z.string().max(1000).optional(),
    values: valueNames,
    bits: z.array(bitField).max(24).optional(),
    role: z.enum(FIELD_ROLES).optional(),
    /** for the length role: the value minus the octets after this field (default 0) */
    lengthAdd: z.number().int().min(-65535).max(65535).optional(),
    /**
     * present only when the layout's status field (an earlier field with the status role) has
     * one of these values: e.g. the record after a read, which an end-of-file answer leaves out
     */
    onlyIfStatus: z.array(z.number().int().min(0).max(65535)).min(1).max(256).optional(),
  })
  .strict();

export const layoutSchema = z
  .object({
    id: identifier,
    name: z.string().max(100).optional(),
    when: z
      .object({
        calls: z.array(z.number().int().min(0).max(65535)).min(1).optional(),
        direction: z.enum(['request', 'response']).optional(),
      })
      .strict()
      .optional(),
    fields: z.array(fieldSchema).min(1).max(200),
  })
  .strict();

/**
 * What a call does to a file, for recovered files: open names an existing file (its answer's
 * record count sizes it), make creates an empty one, close ends a file written in the capture;
 * reads and writes move one record (sequential reads end at an "end of file" answer, status 1);
 * a boot load reads a system image record by record; compute-size answers with the file's size;
 * lock and unlock hold and release a record for a station.
 */
export const FILE_CALL_KINDS = [
  'open',
  'make',
  'close',
  'read-sequential',
  'write-sequential',
  'read-random',
  'write-random',
  'boot-load',
  'compute-size',
  'lock',
  'unlock',
] as const;
export type FileCallKind = (typeof FILE_CALL_KINDS)[number];

export const callNameSchema = z
  .object({
    code: z.number().int().min(0).max(65535),
    name: z.string().min(1).max(60),
    meaning: z.string().max(1000).optional(),
    /** what the call does to a file; maps that name none use the CP/M BDOS numbers */
    file: z.enum(FILE_CALL_KINDS).optional(),
  })
  .strict();

const fieldMapBase = z
  .object({
    name: z.string().trim().min(1).max(100),
    version: z.number().int().min(1),
    description: z.string().max(4000).optional(),
    /** where the call code sits (before a layout is chosen); responseMask bits are cleared from it */
    callCode: z
      .object({
        offset: z.number().int().min(0).max(65535),
        type: z.enum(['u8', 'u16le', 'u16be']),
        responseMask: z.number().int().min(0).max(65535).default(0),
      })
      .strict()
      .optional(),
    calls: z.array(callNameSchema).max(1000).default([]),
    layouts: z.array(layoutSchema).min(1).max(500),
  })
  .strict();

export const fieldMapSchema = fieldMapBase.superRefine((map, ctx) => {
  const codes = new Set<number>();
  map.calls.forEach((c, i) => {
    if (codes.has(c.code)) ctx.addIssue({ code: 'custom', path: ['calls', i, 'code'], message: `call code ${c.code} is named twice` });
    codes.add(c.code);
  });
  const layoutIds = new Set<string>();
  map.layouts.forEach((layout, li) => {
    const at = (...rest: (string | number)[]) => ['layouts', li, ...rest];
    if (layoutIds.has(layout.id)) ctx.addIssue({ code: 'custom', path: at('id'), message: `layout id "${layout.id}" is used twice` });
    layoutIds.add(layout.id);
    if (layout.when?.calls && !map.callCode) {
      ctx.addIssue({ code: 'custom', path: at('when', 'calls'), message: 'a layout chosen by call code needs the map’s callCode (where the call code sits)' });
    }
    const seen = new Map<string, FieldDef>();
    const roles = new Set<string>();
    let afterRest = false;
    layout.fields.forEach((f, fi) => {
      const fp = (...rest: (string | number)[]) => at('fields', fi, ...rest);
      if (seen.has(f.id)) ctx.addIssue({ code: 'custom', path: fp('id'), message: `field id "${f.id}" is used twice in this layout` });
      const fixed = FIXED_SIZE[f.type];
      if (f.type === 'bytes' || f.type === 'ascii') {
        if (f.length === undefined) ctx.addIssue({ code: 'custom', path: fp('length'), message: `a ${f.type} field needs a length (octets, 'rest' or another field)` });
      } else if (f.type === 'bits') {
        if (typeof f.length === 'number' && (f.length < 1 || f.length > 3)) ctx.addIssue({ code: 'custom', path: fp('length'), message: 'a bits field is 1 to 3 octets long' });
        else if (f.length !== undefined && typeof f.length !== 'number') ctx.addIssue({ code: 'custom', path: fp('length'), message: 'a bits field has a fixed length of 1 to 3 octets' });
        if (!f.bits || f.bits.length === 0) ctx.addIssue({ code: 'custom', path: fp('bits'), message: 'a bits field lists its bit fields' });
        const octets = typeof f.length === 'number' ? f.length : 1;
        f.bits?.forEach((b, bi) => {
          if (b.shift + b.width > octets * 8) ctx.addIssue({ code: 'custom', path: fp('bits', bi, 'width'), message: `bits ${b.shift}..${b.shift + b.width - 1} do not fit ${octets} octet(s)` });
        });
      } else if (fixed !== undefined && f.length !== undefined && f.length !== fixed) {
        ctx.addIssue({ code: 'custom', path: fp('length'), message: `a ${f.type} field is ${fixed} octet(s) long` });
      }
      if (f.bits && f.type !== 'bits') ctx.addIssue({ code: 'custom', path: fp('bits'), message: 'only a bits field has bit fields' });
      if (f.offset === undefined && afterRest) {
        ctx.addIssue({ code: 'custom', path: fp('offset'), message: "this field follows a field that takes the rest of the frame; give it an offset" });
      }
      if (typeof f.offset === 'object') {
        const ref = seen.get(f.offset.after);
        if (!ref) ctx.addIssue({ code: 'custom', path: fp('offset', 'after'), message: `"${f.offset.after}" is not an earlier field of this layout` });
        else if (ref.length === 'rest') ctx.addIssue({ code: 'custom', path: fp('offset', 'after'), message: `"${f.offset.after}" takes the rest of the frame; nothing comes after it` });
      }
      if (typeof f.length === 'object') {
        const ref = seen.get(f.length.field);
        if (!ref) ctx.addIssue({ code: 'custom', path: fp('length', 'field'), message: `"${f.length.field}" is not an earlier field of this layout` });
        else if (!NUMERIC_TYPES.includes(ref.type)) ctx.addIssue({ code: 'custom', path: fp('length', 'field'), message: `"${f.length.field}" is a ${ref.type} field, not a number` });
      }
      if (f.role) {
        if (roles.has(f.role)) ctx.addIssue({ code: 'custom', path: fp('role'), message: `another field of this layout already has the role ${f.role}` });
        roles.add(f.role);
        const want = ROLE_TYPES[f.role];
        if (want && !want.includes(f.type)) ctx.addIssue({ code: 'custom', path: fp('role'), message: `the role ${f.role} needs a field of type ${want.join(' or ')}` });
      }
      if (f.lengthAdd !== undefined && f.role !== 'length') ctx.addIssue({ code: 'custom', path: fp('lengthAdd'), message: 'only a field with the length role has lengthAdd' });
      if (f.onlyIfStatus && !layout.fields.slice(0, fi).some((e) => e.role === 'status')) {
        ctx.addIssue({ code: 'custom', path: fp('onlyIfStatus'), message: 'a field present only for some status values needs an earlier field with the status role' });
      }
      if (f.length === 'rest') afterRest = true;
      else if (f.offset !== undefined) afterRest = false;
      seen.set(f.id, f);
    });
  });
});

const NUMBER_TYPES: FieldType[] = ['u8', 'u16le', 'u16be', 'u24le', 'u24be'];
const ROLE_TYPES: Partial<Record<FieldRole, FieldType[]>> = {
  call: NUMBER_TYPES,
  tag: NUMBER_TYPES,
  user: NUMBER_TYPES,
  status: NUMBER_TYPES,
  'record-number': NUMBER_TYPES,
  extent: NUMBER_TYPES,
  module: NUMBER_TYPES,
  'current-record': NUMBER_TYPES,
  length: NUMBER_TYPES,
  'record-count': NUMBER_TYPES,
  'file-size': NUMBER_TYPES,
  'file-name': ['cpm-name', 'ascii'],
  'record-data': ['bytes', 'ascii'],
};

/** The document as written (defaults not yet applied). */
export type FieldMapInput = z.input<typeof fieldMapSchema>;
/** The validated document, defaults applied. */
export type FieldMap = z.output<typeof fieldMapSchema>;
export type FieldDef = FieldMap['layouts'][number]['fields'][number];
export type LayoutDef = FieldMap['layouts'][number];
export type BitFieldDef = NonNullable<FieldDef['bits']>[number];

export interface FieldMapError {
  /** e.g. "layouts[2].fields[3].length"; "" for the document itself */
  path: string;
  message: string;
}

export type FieldMapValidation = { ok: true; map: FieldMap } | { ok: false; errors: FieldMapError[] };

/** Turns a zod issue path into "layouts[2].fields[3].length". */
export function formatPath(path: readonly PropertyKey[]): string {
  let out = '';
  for (const p of path) {
    if (typeof p === 'number') out += `[${p}]`;
    else out += (out ? '.' : '') + String(p);
  }
  return out;
}

/** Validates a field map document; never throws. */
export function validateFieldMap(input: unknown): FieldMapValidation {
  const parsed = fieldMapSchema.safeParse(input);
  if (parsed.success) return { ok: true, map: parsed.data };
  return { ok: false, errors: parsed.error.issues.map((i) => ({ path: formatPath(i.path), message: i.message })) };
}

/** Validates or throws an Error listing every problem with its path (for built-in maps and tests). */
export function parseFieldMap(input: unknown): FieldMap {
  const r = validateFieldMap(input);
  if (!r.ok) throw new Error(`invalid field map: ${r.errors.map((e) => `${e.path || '(map)'}: ${e.message}`).join('; ')}`);
  return r.map;
}

/** Parses a value-name key ("15" or "0x0F"). */
export function valueKey(key: string): number {
  return key.startsWith('0x') || key.startsWith('0X') ? parseInt(key.slice(2), 16) : parseInt(key, 10);
}

/** The name a value has in a value-names table, if any. */
export function valueName(values: Record<string, string> | undefined, value: number): string | null {
  if (!values) return null;
  for (const k of Object.keys(values)) if (valueKey(k) === value) return values[k];
  return null;
}

// ---- Markdown protocol description (the field map export) ----

const cell = (s: string) => s.replace(/\|/g, '\\|').replace(/\r?\n/g, ' ');

/** Where a field starts and how long it is, as far as the map fixes them without a frame. */
function staticSpans(layout: LayoutDef): { offset: string; length: string }[] {
  const ends = new Map<string, number | null>();
  let prev: number | null = 0;
  return layout.fields.map((f) => {
    let start: number | null;
    let offset: string;
    if (typeof f.offset === 'number') {
      start = f.offset;
      offset = String(start);
    } else if (f.offset) {
      start = ends.get(f.offset.after) ?? null;
      offset = start === null ? `after ${f.offset.after}` : String(start);
    } else {
      start = prev;
      offset = start === null ? 'follows' : String(start);
    }
    const fixed = FIXED_SIZE[f.type] ?? (f.type === 'bits' ? (typeof f.length === 'number' ? f.length : 1) : typeof f.length === 'number' ? f.length : null);
    const size = fixed !== null ? String(fixed) : f.length === 'rest' ? 'rest of frame' : f.length && typeof f.length === 'object' ? `value of ${f.length.field}${f.length.add ? ` ${f.length.add > 0 ? '+' : '−'} ${Math.abs(f.length.add)}` : ''}` : '?';
    const length = f.onlyIfStatus ? `${size}, only when status is ${orList(f.onlyIfStatus)}` : size;
    // a field that may be left out does not fix where the next one starts
    const end = start !== null && fixed !== null && !f.onlyIfStatus ? start + fixed : null;
    ends.set(f.id, end);
    prev = end;
    return { offset, length };
  });
}

const orList = (xs: readonly number[]) => (xs.length > 1 ? `${xs.slice(0, -1).join(', ')} or ${xs[xs.length - 1]}` : String(xs[0]));

function valueList(values: Record<string, string> | undefined): string {
  if (!values) return '';
  return Object.entries(values)
    .map(([k, v]) => `${k} ${v}`)
    .join('; ');
}

/** The map as a Markdown protocol description that others can read without Flagline. */
export function fieldMapToMarkdown(map: FieldMap): string {
  const out: string[] = [`# ${map.name} (version ${map.version})`, ''];
  if (map.description) out.push(map.description, '');
  if (map.callCode) {
    const mask = map.callCode.responseMask;
    out.push(`The call code is the ${map.callCode.type} at offset ${map.callCode.offset} of the information field${mask ? `; responses set bits 0x${mask.toString(16).toUpperCase()}` : ''}.`, '');
  }
  if (map.calls.length) {
    out.push('## Calls', '', '| code | name | meaning |', '|---|---|---|');
    for (const c of map.calls) out.push(`| ${c.code} (0x${c.code.toString(16).toUpperCase().padStart(2, '0')}) | ${cell(c.name)} | ${cell([c.meaning ?? '', c.file ? `(file: ${c.file})` : ''].filter(Boolean).join(' '))} |`);
    out.push('');
  }
  out.push('## Layouts', '');
  for (const layout of map.layouts) {
    const when: string[] = [];
    if (layout.when?.direction) when.push(layout.when.direction === 'request' ? 'requests (station → server)' : 'responses (server → station)');
    if (layout.when?.calls) when.push(`call ${layout.when.calls.join(', ')}`);
    out.push(`### ${cell(layout.name ?? layout.id)}`, '', when.length ? `Applies to ${when.join(', ')}.` : 'Applies to every frame no earlier layout matched.', '');
    out.push('| offset | length | field | type | role | meaning | values |', '|---|---|---|---|---|---|---|');
    const spans = staticSpans(layout);
    layout.fields.forEach((f, i) => {
      const bits = f.bits ? f.bits.map((b) => `bit${b.width > 1 ? `s ${b.shift}–${b.shift + b.width - 1}` : ` ${b.shift}`} ${b.name}${b.values ? ` (${valueList(b.values)})` : ''}`).join('; ') : '';
      out.push(`| ${spans[i].offset} | ${spans[i].length} | ${cell(f.name ?? f.id)} | ${f.type} | ${f.role ?? ''} | ${cell(f.meaning ?? '')} | ${cell([valueList(f.values), bits].filter(Boolean).join('; '))} |`);
    });
    out.push('');
  }
  return out.join('\n');
}
