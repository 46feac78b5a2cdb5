// Applies a field map to one frame's information field. Never throws: a field that runs past
// the end of the frame keeps the octets that are there and is marked truncated, and the fields
// that depend on it (offset after it, length from it) are marked too. A field the layout sends
// only for some status values (onlyIfStatus) is absent, not truncated, for the others: it takes
// no octets and the fields after it move up.
import type { DecodedFrame } from '../types';
import { FIXED_SIZE, valueName, type FieldDef, type FieldMap, type FieldRole, type LayoutDef } from './field-map';

export type CallDirection = 'request' | 'response';

/**
 * CP/M file attributes carried in the high bit of the name characters. CP/M 2.2 Operating
 * System Manual, section 5.2, Table 5-2: t1' = 1 read-only file, t2' = 1 SYS file (no DIR
 * list); the name characters otherwise have the high bit 0. CP/M 3 Programmer's Guide, section
 * 2.3: f1'–f8' are file attribute bits and t3' = 1 means archived. That f1'–f4' are left to user
 * programs is from memory of the CP/M 3 and MP/M II guides.
 */
export interface CpmAttributes {
  /** f1'–f4': left to user programs (CP/M 3, MP/M II) */
  f1: boolean;
  f2: boolean;
  f3: boolean;
  f4: boolean;
  /** t1': read-only file (CP/M 2.2) */
  readOnly: boolean;
  /** t2': system file, not listed by DIR (CP/M 2.2) */
  system: boolean;
  /** t3': archived (CP/M 3; unused by CP/M 2.2) */
  archive: boolean;
}

export interface DecodedBitField {
  name: string;
  value: number;
  valueName: string | null;
}

export interface CallField {
  id: string;
  name: string;
  type: FieldDef['type'];
  role: FieldRole | null;
  meaning: string | null;
  /** octet offset in the information field (add the link decode's infoOffset for the frame) */
  offset: number;
  /** octets the map gives the field */
  length: number;
  /** octets actually present (less than length when truncated) */
  available: number;
  truncated: boolean;
  /** the layout leaves this field out for the frame's status value (onlyIfStatus); it takes no octets */
  absent: boolean;
  /** numbers (bits: the whole value); null when truncated */
  value: number | null;
  /** text for ascii and cpm-name fields (masked to 7 bits); null otherwise */
  text: string | null;
  valueName: string | null;
  bits: DecodedBitField[] | null;
  attributes: CpmAttributes | null;
  /** short display form: number with its name, hex for bytes, text for names */
  display: string;
}

export interface DecodedCall {
  direction: CallDirection;
  /** id of the layout used; null when none matched */
  layout: string | null;
  callCode: number | null;
  callName: string | null;
  tag: number | null;
  user: number | null;
  /** "NAME.TYP" masked to 7 bits, padding removed */
  fileName: string | null;
  attributes: CpmAttributes | null;
  /** record-number role, else (module * 32 + extent) * 128 + current-record (module bits only, see MODULE_MASK) */
  recordNumber: number | null;
  /** FCB position and size fields (extent, module bits, record-count roles), when the layout has them */
  extent: number | null;
  module: number | null;
  recordCount: number | null;
  /** file-size role: the file's size in records as the server states it */
  fileSize: number | null;
  status: number | null;
  statusMeaning: string | null;
  /** complete record data only (null when truncated or absent) */
  recordData: Uint8Array | null;
  fields: CallField[];
  /** some field ran past the end of the information field */
  truncated: boolean;
  /** octets after the last field the layout describes */
  unexplained: number;
  problems: string[];
}

function readNumber(info: Uint8Array, at: number, type: FieldDef['type'], length: number): number {
  let v = 0;
  if (type === 'u16be' || type === 'u24be') {
    // big-endian: the first octet is the most significant
    for (let k = 0; k < length; k++) v = v * 256 + info[at + k];
    return v;
  }
  // every other number (u8, u16le, u24le, bits) is little-endian across its octets
  for (let k = length - 1; k >= 0; k--) v = v * 256 + info[at + k];
  return v;
}

/**
 * The module number is the low four bits of the FCB's s2. CP/M 2.2 Operating System Manual,
 * section 5.2 (Figure 5-2, Table 5-2): a file holds at most 65 536 records of 128 bytes in 16 KB
 * logical extents, ex 0–31, so 65 536 / (32 × 128) = 16 modules. The high bit of s2 is the
 * BDOS's own "file written" flag, set on open and make and masked off by the BDOS itself (from
 * memory of the CP/M 2.2 BDOS listing); a station that forwards its FCB as the BDOS left it sends it.
 */
export const MODULE_MASK = 0x0f;

const HEX = (b: number) => b.toString(16).toUpperCase().padStart(2, '0');
const printable = (c: number) => (c >= 0x20 && c < 0x7f ? String.fromCharCode(c) : '.');

/** 8 + 3 name characters → "NAME.TYP" (7-bit, padding removed) and the attribute bits. */
export function decodeCpmName(bytes: Uint8Array): { text: string; attributes: CpmAttributes } {
  const ch = (i: number) => (i < bytes.length ? bytes[i] & 0x7f : 0x20);
  const hi = (i: number) => i < bytes.length && (bytes[i] & 0x80) !== 0;
  let name = '';
  for (let i = 0; i < 8; i++) name += printable(ch(i));
  let type = '';
  for (let i = 8; i < 11; i++) type += printable(ch(i));
  name = name.trimEnd();
  type = type.trimEnd();
  return {
    text: type ? `${name}.${type}` : name,
    attributes: { f1: hi(0), f2: hi(1), f3: hi(2), f4: hi(3), readOnly: hi(8), system: hi(9), archive: hi(10) },
  };
}

/** The call code as the map's callCode says (response bits cleared); null when the frame is too short. */
export function readCallCode(map: FieldMap, info: Uint8Array): number | null {
  const cc = map.callCode;
  if (!cc) return null;
  const size = cc.type === 'u8' ? 1 : 2;
  if (cc.offset + size > info.length) return null;
  return readNumber(info, cc.offset, cc.type, size) & ~cc.responseMask;
}

/** First layout whose conditions match; layouts with call conditions never match an unknown call code. */
export function chooseLayout(map: FieldMap, callCode: number | null, direction: CallDirection): LayoutDef | null {
  for (const l of map.layouts) {
    if (l.when?.direction && l.when.direction !== direction) continue;
    if (l.when?.calls && (callCode === null || !l.when.calls.includes(callCode))) continue;
    return l;
  }
  return null;
}

export function applyFieldMap(map: FieldMap, info: Uint8Array, direction: CallDirection): DecodedCall {
  const callCode = readCallCode(map, info);
  const layout = chooseLayout(map, callCode, direction);
  const out: DecodedCall = {
    direction,
    layout: layout?.id ?? null,
    callCode,
    callName: null,
    tag: null,
    user: null,
    fileName: null,
    attributes: null,
    recordNumber: null,
    extent: null,
    module: null,
    recordCount: null,
    fileSize: null,
    status: null,
    statusMeaning: null,
    recordData: null,
    fields: [],
    truncated: false,
    unexplained: 0,
    problems: [],
  };
  if (!layout) {
    out.problems.push(`no layout of “${map.name}” fits a ${direction}${callCode !== null ? ` with call code ${callCode}` : ''}`);
    out.callName = callCode !== null ? callName(map, callCode) : null;
    out.unexplained = info.length;
    return out;
  }
  // end offset of every field by id; NaN when the field could not be placed
  const ends = new Map<string, number>();
  const byId = new Map<string, CallField>();
  let prevEnd = 0;
  let furthest = 0;
  const roles: Partial<Record<FieldRole, CallField>> = {};
  for (const def of layout.fields) {
    let offset: number;
    if (typeof def.offset === 'number') offset = def.offset;
    else if (def.offset && typeof def.offset === 'object') offset = ends.get(def.offset.after) ?? NaN;
    else offset = prevEnd;
    // the status is an earlier field (validation checks it); an unknown status leaves the field in
    const status = roles.status?.value;
    if (def.onlyIfStatus && status !== undefined && status !== null && !def.onlyIfStatus.includes(status)) {
      const f = absentField(def, info, offset, status);
      out.fields.push(f);
      byId.set(def.id, f);
      ends.set(def.id, offset);
      prevEnd = offset;
      continue;
    }
    let length: number;
    const fixed = FIXED_SIZE[def.type];
    if (def.type === 'bits') length = typeof def.length === 'number' ? def.length : 1;
    else if (fixed !== undefined) length = fixed;
    else if (typeof def.length === 'number') length = def.length;
    else if (def.length === 'rest') length = Math.max(0, info.length - offset);
    else if (def.length && typeof def.length === 'object') {
      const ref = byId.get(def.length.field);
      length = ref && ref.value !== null ? Math.max(0, ref.value + def.length.add) : NaN;
    } else length = 0;
    const f = decodeField(def, info, offset, length);
    out.fields.push(f);
    byId.set(def.id, f);
    const end = Number.isFinite(offset) && Number.isFinite(length) ? offset + length : NaN;
    ends.set(def.id, end);
    prevEnd = end;
    if (Number.isFinite(end)) furthest = Math.max(furthest, Math.min(end, info.length));
    if (f.truncated) out.truncated = true;
    if (def.role) roles[def.role] = f;
  }
  out.unexplained = Math.max(0, info.length - furthest);
  const len = roles.length;
  if (len && len.value !== null) {
    const def = layout.fields.find((d) => d.id === len.id)!;
    const follow = info.length - (len.offset + len.length);
    const want = len.value - (def.lengthAdd ?? 0);
    if (want !== follow) out.problems.push(`the length field “${len.id}” says ${want} octets follow it, the frame has ${follow}`);
  }
  if (out.truncated) {
    const first = out.fields.find((f) => f.truncated)!;
    out.problems.push(`the frame ends inside field “${first.id}”: ${info.length} octets, the layout needs more`);
  }
  const num = (r: FieldRole) => roles[r]?.value ?? null;
  if (out.callCode === null) out.callCode = num('call');
  out.callName = out.callCode !== null ? callName(map, out.callCode) : null;
  out.tag = num('tag');
  out.user = num('user');
  out.status = num('status');
  out.statusMeaning = roles.status?.valueName ?? null;
  const name = roles['file-name'];
  if (name && !name.truncated && name.text !== null) {
    out.fileName = name.text;
    out.attributes = name.attributes;
  }
  const rn = num('record-number');
  if (rn !== null) out.recordNumber = rn;
  else {
    const ex = num('extent');
    const cr = num('current-record');
    // CP/M 2.2 Operating System Manual 5.2: a logical extent is 16 KB = 128 records, ex 0–31;
    // a module (s2) holds 32 extents (from memory of the CP/M 2.2 BDOS listing)
    if (ex !== null && cr !== null) out.recordNumber = ((moduleBits(num('module')) ?? 0) * 32 + ex) * 128 + cr;
  }
  out.extent = num('extent');
  out.module = moduleBits(num('module'));
  out.recordCount = num('record-count');
  out.fileSize = num('file-size');
  const data = roles['record-data'];
  if (data && !data.truncated && data.available > 0) out.recordData = info.slice(data.offset, data.offset + data.length);
  return out;
}

function moduleBits(s2: number | null): number | null {
  return s2 === null ? null : s2 & MODULE_MASK;
}

function callName(map: FieldMap, code: number): string | null {
  return map.calls.find((c) => c.code === code)?.name ?? null;
}

function decodeField(def: FieldDef, info: Uint8Array, offset: number, length: number): CallField {
  const placed = Number.isFinite(offset) && Number.isFinite(length);
  const available = placed ? Math.max(0, Math.min(length, info.length - offset)) : 0;
  const truncated = !placed || available < length;
  const f: CallField = {
    id: def.id,
    name: def.name ?? def.id,
    type: def.type,
    role: def.role ?? null,
    meaning: def.meaning ?? null,
    offset: Number.isFinite(offset) ? offset : info.length,
    length: Number.isFinite(length) ? length : 0,
    available,
    truncated,
    absent: false,
    value: null,
    text: null,
    valueName: null,
    bits: null,
    attributes: null,
    display: '',
  };
  const bytes = info.subarray(f.offset, f.offset + available);
  switch (def.type) {
    case 'u8':
    case 'u16le':
    case 'u16be':
    case 'u24le':
    case 'u24be':
    case 'bits':
      if (!truncated) {
        f.value = readNumber(info, offset, def.type, length);
        f.valueName = valueName(def.values, f.value);
        if (def.bits) {
          f.bits = def.bits.map((b) => {
            const v = Math.floor(f.value! / 2 ** b.shift) % 2 ** b.width;
            return { name: b.name, value: v, valueName: valueName(b.values, v) };
          });
        }
        f.display = def.bits
          ? f.bits!.map((b) => `${b.name}=${b.valueName ?? b.value}`).join(' ')
          : `${f.value}${f.valueName ? ` (${f.valueName})` : ''}`;
      }
      break;
    case 'ascii': {
      let s = '';
      for (const b of bytes) s += printable(b & 0x7f);
      f.text = s;
      f.display = JSON.stringify(s);
      break;
    }
    case 'cpm-name': {
      const d = decodeCpmName(bytes);
      f.text = d.text;
      f.attributes = d.attributes;
      const flags = attributeList(d.attributes);
      f.display = d.text + (flags.length ? ` [${flags.join(', ')}]` : '');
      break;
    }
    case 'bytes':
      f.display = Array.from(bytes.subarray(0, 16), HEX).join(' ') + (bytes.length > 16 ? ` … (${bytes.length} octets)` : '');
      break;
  }
  if (truncated) f.display = (f.display ? f.display + ' ' : '') + `(truncated: ${available} of ${placed ? length : '?'} octets)`;
  return f;
}

/** A field the layout leaves out for this status value: no octets, not truncated. */
function absentField(def: FieldDef, info: Uint8Array, offset: number, status: number): CallField {
  return {
    id: def.id,
    name: def.name ?? def.id,
    type: def.type,
    role: def.role ?? null,
    meaning: def.meaning ?? null,
    offset: Number.isFinite(offset) ? offset : info.length,
    length: 0,
    available: 0,
    truncated: false,
    absent: true,
    value: null,
    text: null,
    valueName: null,
    bits: null,
    attributes: null,
    display: `(not sent when status is ${status})`,
  };
}

/** Names of the set attribute bits, for display. */
export function attributeList(a: CpmAttributes): string[] {
  const out: string[] = [];
  if (a.readOnly) out.push('read-only');
  if (a.system) out.push('system');
  if (a.archive) out.push('archive');
  (['f1', 'f2', 'f3', 'f4'] as const).forEach((k) => a[k] && out.push(`${k}'`));
  return out;
}

/**
 * Call-layer decode of a frame: only good I frames (and UI frames, which some networks use for
 * datagrams) carry a call. The information field starts after the link decode's address and
 * control; the FCS is not part of it. `badFcs: true` also reads a bad-FCS frame: its values may
 * be damaged, so they serve only to guess which exchange it belonged to.
 */
/** What the call decode reads of a frame (a stored frame rebuilt from its row has just this much). */
export type CallDecodeFrame = Pick<DecodedFrame, 'status' | 'bytes' | 'decode'>;

export function decodeFrameCall(map: FieldMap, frame: CallDecodeFrame, direction: CallDirection, badFcs = false): DecodedCall | null {
  const d = frame.decode;
  const readable = frame.status === 'ok' || (badFcs && frame.status === 'bad-fcs');
  if (!readable || !d || (d.kind !== 'I' && d.command !== 'UI') || d.infoLength === 0) return null;
  const { infoOffset, infoLength } = d;
  return applyFieldMap(map, frame.bytes.subarray(infoOffset, infoOffset + infoLength), direction);
}
