// The built-in field map "CP/M call envelope": a reference layout of our own design in which a
// station's network redirector forwards CP/M 2.2 BDOS calls to the file server.
//
//   request : call u8 (BDOS function number), tag u8, user u8 (0–15),
//             then a 36-byte FCB when the call takes one, then a 128-byte record for writes
//   response: call | 0x80, tag, status u8 (the BDOS return code for that call),
//             the updated FCB when the request had one, then a 128-byte record for reads —
//             only when the status says a record follows (onlyIfStatus)
//
// Sources, each named beside what it gives:
// - "CP/M 2.2 manual": CP/M Operating System Manual (Digital Research, CP/M 2.2), section 5.2
//   "Call Conventions": the function descriptions, Figure 5-2 (FCB format) and Table 5-2 (FCB
//   fields). Where a function there returns nothing or only "nonzero", the value the envelope's
//   server sends is marked with where it comes from instead.
// - "CP/M 3 guide": CP/M 3 Programmer's Guide (Digital Research, first edition 1983), section 2.3
//   (FCB fields, attributes) and section 3 (each BDOS function's return codes).
// - record lock/unlock (42/43): CP/M 3 guide section 3, functions 42 and 43, which describes
//   them as MP/M II functions; their error codes are from memory of the MP/M II Programmer's Guide.
// - "from memory of the CP/M 2.2 BDOS listing": behaviour of the BDOS itself that no manual states.
// Call 0x70 "boot load" is our own.
import { parseFieldMap, type FieldMap, type FieldMapInput, type FieldRole } from './field-map';

type FieldIn = FieldMapInput['layouts'][number]['fields'][number];
type LayoutIn = FieldMapInput['layouts'][number];

export const CPM_RECORD_BYTES = 128; // CP/M 2.2 manual 5.2: "the basic unit of file information is a 128-byte record"
export const CPM_FCB_BYTES = 36; // CP/M 2.2 manual 5.2: 33 bytes for sequential access, 36 with r0–r2 for random
export const RESPONSE_FLAG = 0x80;

/** BDOS function numbers (CP/M 2.2 manual 5.2; 42/43: CP/M 3 guide section 3, MP/M II functions) and our boot call. */
export const BDOS = {
  CONSOLE_OUTPUT: 2,
  LIST_OUTPUT: 5,
  PRINT_STRING: 9,
  RESET_DISK_SYSTEM: 13,
  SELECT_DISK: 14,
  OPEN_FILE: 15,
  CLOSE_FILE: 16,
  SEARCH_FIRST: 17,
  SEARCH_NEXT: 18,
  DELETE_FILE: 19,
  READ_SEQUENTIAL: 20,
  WRITE_SEQUENTIAL: 21,
  MAKE_FILE: 22,
  RENAME_FILE: 23,
  SET_DMA: 26,
  READ_RANDOM: 33,
  WRITE_RANDOM: 34,
  COMPUTE_FILE_SIZE: 35,
  SET_RANDOM_RECORD: 36,
  WRITE_RANDOM_ZERO_FILL: 40,
  LOCK_RECORD: 42,
  UNLOCK_RECORD: 43,
  /** our own network-boot call: one record of the station's system image */
  BOOT_LOAD: 0x70,
} as const;

/** FCB field offsets (CP/M 2.2 manual 5.2, Figure 5-2 "File Control Block Format"). */
export const FCB = { dr: 0, f1: 1, t1: 9, ex: 12, s1: 13, s2: 14, rc: 15, d0: 16, cr: 32, r0: 33, r1: 34, r2: 35 } as const;

// CP/M 2.2 manual 5.2, functions 15–19, 22, 23: a directory code 0–3 on success, 0FFH otherwise.
const DIRECTORY_CODE = {
  '0': 'ok: directory code 0',
  '1': 'ok: directory code 1',
  '2': 'ok: directory code 2',
  '3': 'ok: directory code 3',
};
// CP/M 2.2 manual 5.2, function 33: 01, 03, 04, 06 (02 and 05 are not returned by a read).
const RANDOM_READ_CODES = {
  '0': 'ok',
  '1': 'reading unwritten data',
  '3': 'cannot close current extent',
  '4': 'seek to unwritten extent',
  '6': 'seek past physical end of disk',
};
// CP/M 2.2 manual 5.2, function 34: the read codes plus 05 (directory overflow); the names of
// 02 and 05 as the CP/M 3 guide section 3, function 34, gives them.
const RANDOM_WRITE_CODES = {
  '0': 'ok',
  '2': 'no available data block (disk full)',
  '3': 'cannot close current extent',
  '5': 'no available directory space',
  '6': 'seek past physical end of disk',
};
// Lock/unlock record return codes: from memory of the MP/M II Programmer's Guide (functions 42, 43).
const LOCK_CODES = {
  '0': 'ok',
  '1': 'reading unwritten data',
  '3': 'cannot close current extent',
  '4': 'seek to unwritten extent',
  '6': 'random record number out of range',
  '8': 'record locked by another station',
  '10': 'FCB checksum error',
  '11': 'unlocked file verification error',
  '0xFF': 'physical error',
};

interface CallSpec {
  code: number;
  name: string;
  meaning: string;
  fcb: boolean;
  /** a 128-byte record follows in the request (writes) */
  writes?: boolean;
  /** a 128-byte record follows in the response (reads, directory searches, boot load) */
  reads?: boolean;
  /** how the FCB gives the record position: sequential (ex/s2/cr) or random (r0–r2) */
  position?: 'sequential' | 'random';
  /** request payload after the envelope header when there is no FCB */
  extra?: FieldIn[];
  /** response payload after status when there is no FCB */
  responseExtra?: FieldIn[];
  /** status values after which the response carries its record (reads): other answers carry none */
  recordIfStatus?: number[];
  /** roles of the response FCB's fields (open: its position and record count; compute file size: r0–r2) */
  responseRoles?: Partial<Record<'ex' | 's2' | 'rc' | 'r', FieldRole>>;
  status: Record<string, string>;
}

const READ_OK = [0];
const DIRECTORY_FOUND = [0, 1, 2, 3];

// Return codes per function; where the manual gives none the comment says where the value comes from.
const CALLS: CallSpec[] = [
  {
    code: BDOS.CONSOLE_OUTPUT,
    name: 'console output',
    meaning: 'characters for the server console (BDOS 2 sends one character in E; the redirector batches them)',
    fcb: false,
    extra: [{ id: 'text', type: 'ascii', length: 'rest', meaning: 'characters written' }],
    status: { '0': 'ok' },
  },
  {
    code: BDOS.LIST_OUTPUT,
    name: 'list output',
    meaning: 'characters for the server’s printer (BDOS 5 sends one character in E; the redirector batches them)',
    fcb: false,
    extra: [{ id: 'text', type: 'ascii', length: 'rest', meaning: 'characters printed' }],
    status: { '0': 'ok', '1': 'printer busy, try again' },
  },
  {
    code: BDOS.PRINT_STRING,
    name: 'print string',
    meaning: 'a console string ended by "$"',
    fcb: false,
    extra: [{ id: 'text', type: 'ascii', length: 'rest', meaning: 'string up to and including "$"' }],
    status: { '0': 'ok' },
  },
  // CP/M 2.2 manual 5.2, function 13 returns nothing; the 0FFH when a $ file exists on A is the
  // 2.2 BDOS's own behaviour (from memory of the CP/M 2.2 BDOS listing), forwarded by the server.
  {
    code: BDOS.RESET_DISK_SYSTEM,
    name: 'reset disk system',
    meaning: 'all drives read/write, drive A selected',
    fcb: false,
    status: { '0': 'ok', '0xFF': 'a file whose name starts with $ exists on A (2.2 BDOS behaviour)' },
  },
  // CP/M 2.2 manual 5.2, function 14 returns nothing; 0FFH on a select error is CP/M 3 behaviour
  // (CP/M 3 guide section 3, function 14), which the envelope's server follows.
  {
    code: BDOS.SELECT_DISK,
    name: 'select disk',
    meaning: 'makes a drive the default',
    fcb: false,
    extra: [{ id: 'drive', type: 'u8', meaning: 'drive 0 = A … 15 = P', values: { '0': 'A', '1': 'B', '2': 'C', '3': 'D' } }],
    status: { '0': 'ok', '0xFF': 'select error (as CP/M 3 answers it)' },
  },
  {
    code: BDOS.OPEN_FILE,
    name: 'open file',
    meaning: 'finds the file and fills in the FCB; rc of the answer (with ex and s2) says how many records extent ex holds',
    fcb: true,
    responseRoles: { ex: 'extent', s2: 'module', rc: 'record-count' },
    status: { ...DIRECTORY_CODE, '0xFF': 'file not found' },
  },
  { code: BDOS.CLOSE_FILE, name: 'close file', meaning: 'writes the FCB back to the directory', fcb: true, status: { ...DIRECTORY_CODE, '0xFF': 'file not found' } },
  {
    code: BDOS.SEARCH_FIRST,
    name: 'search first',
    meaning: 'first directory entry matching the FCB (? matches any character); the record holds four 32-byte entries, status picks one',
    fcb: true,
    reads: true,
    recordIfStatus: DIRECTORY_FOUND,
    status: { ...DIRECTORY_CODE, '0xFF': 'no matching file' },
  },
  {
    code: BDOS.SEARCH_NEXT,
    name: 'search next',
    meaning: 'next directory entry matching the FCB of the last search first (takes no FCB)',
    fcb: false,
    responseExtra: [{ id: 'record', type: 'bytes', length: 128, role: 'record-data', meaning: 'directory record: four 32-byte entries', onlyIfStatus: DIRECTORY_FOUND }],
    status: { ...DIRECTORY_CODE, '0xFF': 'no more matching files' },
  },
  { code: BDOS.DELETE_FILE, name: 'delete file', meaning: 'removes matching files', fcb: true, status: { ...DIRECTORY_CODE, '0xFF': 'file not found' } },
  // CP/M 2.2 manual 5.2, function 20: 00H ok, nonzero when no data exist at the next record
  // position; 01 is the value the CP/M 3 guide (section 3, function 20) names "reading unwritten data (end-of-file)".
  {
    code: BDOS.READ_SEQUENTIAL,
    name: 'read sequential',
    meaning: 'reads the record at the FCB’s position (ex, s2, cr) and advances cr',
    fcb: true,
    reads: true,
    recordIfStatus: READ_OK,
    position: 'sequential',
    status: { '0': 'ok', '1': 'end of file' },
  },
  // CP/M 2.2 manual 5.2, function 21: 00H ok, nonzero when the disk is full; the values 01 and 02
  // as the CP/M 3 guide (section 3, function 21) names them.
  {
    code: BDOS.WRITE_SEQUENTIAL,
    name: 'write sequential',
    meaning: 'writes the record at the FCB’s position (ex, s2, cr) and advances cr',
    fcb: true,
    writes: true,
    position: 'sequential',
    status: { '0': 'ok', '1': 'no available directory space', '2': 'no available data block (disk full)' },
  },
  { code: BDOS.MAKE_FILE, name: 'make file', meaning: 'creates an empty file', fcb: true, status: { ...DIRECTORY_CODE, '0xFF': 'directory full' } },
  { code: BDOS.RENAME_FILE, name: 'rename file', meaning: 'renames the file named at FCB 0–15 to the name at FCB 16–31', fcb: true, status: { ...DIRECTORY_CODE, '0xFF': 'file not found' } },
  {
    code: BDOS.SET_DMA,
    name: 'set DMA address',
    meaning: 'where records go in station memory',
    fcb: false,
    extra: [{ id: 'dma', type: 'u16le', meaning: 'DMA address' }],
    status: { '0': 'ok' },
  },
  { code: BDOS.READ_RANDOM, name: 'read random', meaning: 'reads the record numbered r0–r2', fcb: true, reads: true, recordIfStatus: READ_OK, position: 'random', status: RANDOM_READ_CODES },
  { code: BDOS.WRITE_RANDOM, name: 'write random', meaning: 'writes the record numbered r0–r2', fcb: true, writes: true, position: 'random', status: RANDOM_WRITE_CODES },
  // CP/M 2.2 manual 5.2, function 35 returns no code, only r0–r2 set to the virtual file size
  // (the record after the end of the file); the envelope's server answers status 0.
  {
    code: BDOS.COMPUTE_FILE_SIZE,
    name: 'compute file size',
    meaning: 'sets r0–r2 to the virtual file size: the number of the record after the end of the file',
    fcb: true,
    responseRoles: { r: 'file-size' },
    status: { '0': 'ok' },
  },
  { code: BDOS.SET_RANDOM_RECORD, name: 'set random record', meaning: 'sets r0–r2 from the sequential position', fcb: true, status: { '0': 'ok' } },
  { code: BDOS.WRITE_RANDOM_ZERO_FILL, name: 'write random with zero fill', meaning: 'as write random, new blocks filled with zeros', fcb: true, writes: true, position: 'random', status: RANDOM_WRITE_CODES },
  { code: BDOS.LOCK_RECORD, name: 'lock record', meaning: 'locks the record numbered r0–r2 for this station', fcb: true, position: 'random', status: LOCK_CODES },
  { code: BDOS.UNLOCK_RECORD, name: 'unlock record', meaning: 'releases the lock on the record numbered r0–r2', fcb: true, position: 'random', status: LOCK_CODES },
  {
    code: BDOS.BOOT_LOAD,
    name: 'boot load',
    meaning: 'one 128-byte record of the named system image, before CP/M runs on the station (our own network-boot call)',
    fcb: false,
    extra: [
      { id: 'image', type: 'cpm-name', role: 'file-name', meaning: 'system image name, 8 + 3 characters' },
      { id: 'record_no', type: 'u16le', role: 'record-number', meaning: 'record of the image, from 0' },
    ],
    responseExtra: [
      { id: 'record_no', type: 'u16le', role: 'record-number', meaning: 'record of the image, from 0' },
      { id: 'record', type: 'bytes', length: 128, role: 'record-data', meaning: '128 bytes of the image', onlyIfStatus: READ_OK },
    ],
    status: { '0': 'ok', '1': 'record past the end of the image', '0xFF': 'no such image' },
  },
];

function fcbFields(position: CallSpec['position'], rename: boolean): FieldIn[] {
  const fields: FieldIn[] = [
    { id: 'dr', type: 'u8', meaning: 'drive: 0 = default, 1 = A … 16 = P (FCB byte 0)', values: { '0': 'default drive', '1': 'A', '2': 'B', '3': 'C', '4': 'D' } },
    { id: 'name', type: 'cpm-name', role: 'file-name', meaning: 'f1–f8 name and t1–t3 type, space padded; high bits are attributes (FCB bytes 1–11)' },
    { id: 'ex', type: 'u8', meaning: 'current extent, 0–31, 16 KB = 128 records each (FCB byte 12)' },
    { id: 's1', type: 'u8', meaning: 'reserved for the system (FCB byte 13)' },
    {
      id: 's2',
      type: 'u8',
      meaning: 'module number in the low four bits, 32 extents = 512 KB each; bit 7 is the BDOS’s own write flag (FCB byte 14)',
    },
    { id: 'rc', type: 'u8', meaning: 'records in extent ex, 0–127; the BDOS sets 128 when it opens a full extent (FCB byte 15)' },
    rename
      ? { id: 'new_dr', type: 'u8', meaning: 'rename: drive of the new name (FCB byte 16)' }
      : { id: 'd', type: 'bytes', length: 16, meaning: 'allocation map d0–d15 (FCB bytes 16–31)' },
  ];
  if (rename) {
    fields.push(
      { id: 'new_name', type: 'cpm-name', meaning: 'rename: the new name (FCB bytes 17–27)' },
      { id: 'new_rest', type: 'bytes', length: 4, meaning: 'FCB bytes 28–31' },
    );
  }
  fields.push(
    { id: 'cr', type: 'u8', meaning: 'current record in the extent, 0–127 (FCB byte 32)' },
    { id: 'r', type: 'u24le', meaning: 'random record number r0–r2, r0 least significant (FCB bytes 33–35)' },
  );
  if (position === 'sequential') {
    fields[2].role = 'extent';
    fields[4].role = 'module';
    fields[fields.length - 2].role = 'current-record';
  } else if (position === 'random') {
    fields[fields.length - 1].role = 'record-number';
  }
  return fields;
}

function layoutsFor(c: CallSpec): LayoutIn[] {
  const code = c.code;
  const request: FieldIn[] = [
    { id: 'call', type: 'u8', role: 'call', meaning: 'BDOS function number' },
    { id: 'tag', type: 'u8', role: 'tag', meaning: 'pairs the response with this request; a retry repeats it' },
    { id: 'user', type: 'u8', role: 'user', meaning: 'CP/M user number 0–15' },
  ];
  const response: FieldIn[] = [
    { id: 'call', type: 'u8', role: 'call', meaning: 'BDOS function number with bit 7 set' },
    { id: 'tag', type: 'u8', role: 'tag', meaning: 'the request’s tag' },
    { id: 'status', type: 'u8', role: 'status', meaning: 'BDOS return code', values: c.status },
  ];
  if (c.fcb) {
    request.push(...fcbFields(c.position, code === BDOS.RENAME_FILE));
    const roles: Partial<Record<string, FieldRole>> = c.responseRoles ?? {};
    response.push(...fcbFields(undefined, code === BDOS.RENAME_FILE).map((f) => ({ ...f, role: f.role === 'file-name' ? ('file-name' as const) : roles[f.id] })));
  }
  if (c.extra) request.push(...c.extra);
  if (c.responseExtra) response.push(...c.responseExtra);
  if (c.writes) request.push({ id: 'record', type: 'bytes', length: CPM_RECORD_BYTES, role: 'record-data', meaning: 'the 128-byte record written' });
  if (c.reads && !c.responseExtra) {
    response.push({
      id: 'record',
      type: 'bytes',
      length: CPM_RECORD_BYTES,
      role: 'record-data',
      meaning: code === BDOS.SEARCH_FIRST ? 'directory record: four 32-byte entries' : 'the 128-byte record read',
      onlyIfStatus: c.recordIfStatus,
    });
  }
  const slug = c.name.replace(/[^a-z0-9]+/gi, '-');
  return [
    { id: `${slug}-request`, name: `${c.name} (request)`, when: { calls: [code], direction: 'request' }, fields: request },
    { id: `${slug}-response`, name: `${c.name} (response)`, when: { calls: [code], direction: 'response' }, fields: response },
  ];
}

const FALLBACK: LayoutIn[] = [
  {
    id: 'other-request',
    name: 'other call (request)',
    when: { direction: 'request' },
    fields: [
      { id: 'call', type: 'u8', role: 'call' },
      { id: 'tag', type: 'u8', role: 'tag' },
      { id: 'user', type: 'u8', role: 'user' },
      { id: 'payload', type: 'bytes', length: 'rest' },
    ],
  },
  {
    id: 'other-response',
    name: 'other call (response)',
    when: { direction: 'response' },
    fields: [
      { id: 'call', type: 'u8', role: 'call' },
      { id: 'tag', type: 'u8', role: 'tag' },
      { id: 'status', type: 'u8', role: 'status' },
      { id: 'payload', type: 'bytes', length: 'rest' },
    ],
  },
];

export const CPM_ENVELOPE_DOCUMENT: FieldMapInput = {
  name: 'CP/M call envelope',
  version: 1,
  description:
    'Flagline’s reference layout: CP/M 2.2 BDOS calls forwarded by a station to the file server. ' +
    'Request: call, tag, user, FCB (36 bytes) when the call takes one, 128-byte record for writes. ' +
    'Response: call | 0x80, tag, status (BDOS return code), the updated FCB, 128-byte record for reads.',
  callCode: { offset: 0, type: 'u8', responseMask: RESPONSE_FLAG },
  calls: CALLS.map((c) => ({ code: c.code, name: c.name, meaning: c.meaning })),
  layouts: [...CALLS.flatMap(layoutsFor), ...FALLBACK],
};

/** The built-in map, validated once at load. */
export const CPM_ENVELOPE: FieldMap = parseFieldMap(CPM_ENVELOPE_DOCUMENT);
