// The second demo protocol, of our own design: the "ledger envelope" of the invented Saltmarsh
// Ferry Company's office network (1984). Its file service differs from the built-in CP/M call
// envelope in every way a restorer would have to discover:
//
//   request : op u8, len u8 (octets after it), name 11 (8 + 3, attributes in the high bits),
//             record u16 big-endian, then a 128-byte record for stores
//   response: op u8 (the request's op again), len u8, status u8, record u16 big-endian (the
//             request's, or the record count for locate), then a 128-byte record for fetches
//             that succeeded
//
// There is no tag: a station has one call outstanding, so answers pair with requests by order.
// Ops: 0x31 locate (open), 0x32 fetch (read a record), 0x33 store (write a record), 0x34 release
// (close). Status: 0 done, 1 end of file (fetch past the last record), 2 no such file, 3 ledger
// full. LEDGER_MAP_DOCUMENT below describes it in the field-map language; tests hold the encoder
// and the map to each other, and field hints must find it from captures alone.
import type { FieldMapInput } from '../calls/field-map';
import { cpmName, type ScriptCall } from './calls';

export const LEDGER_OP = { LOCATE: 0x31, FETCH: 0x32, STORE: 0x33, RELEASE: 0x34 } as const;
export const LEDGER_STATUS = { DONE: 0, END_OF_FILE: 1, NO_SUCH_FILE: 2, LEDGER_FULL: 3 } as const;
export const LEDGER_RECORD_BYTES = 128;

function build(parts: (number[] | Uint8Array)[]): Uint8Array {
  const n = parts.reduce((k, p) => k + p.length, 0);
  const out = new Uint8Array(n);
  let at = 0;
  for (const p of parts) {
    out.set(p, at);
    at += p.length;
  }
  return out;
}

const be16 = (n: number) => [(n >> 8) & 0xff, n & 0xff];

/** A request information field: op, len, name, record (big-endian), record data for stores. */
export function ledgerRequest(op: number, name: string, record: number, data?: Uint8Array): Uint8Array {
  if (data && data.length !== LEDGER_RECORD_BYTES) throw new RangeError(`a ledger record is ${LEDGER_RECORD_BYTES} bytes`);
  const body = build([cpmName(name), be16(record), ...(data ? [data] : [])]);
  return build([[op, body.length], body]);
}

/** A response information field: op, len, status, record (big-endian), record data for fetches. */
export function ledgerResponse(op: number, status: number, record: number, data?: Uint8Array): Uint8Array {
  const body = build([[status], be16(record), ...(data ? [data] : [])]);
  return build([[op, body.length], body]);
}

function records(data: Uint8Array): Uint8Array[] {
  const out: Uint8Array[] = [];
  for (let at = 0; at < data.length; at += LEDGER_RECORD_BYTES) {
    const r = new Uint8Array(LEDGER_RECORD_BYTES).fill(0x1a);
    r.set(data.subarray(at, at + LEDGER_RECORD_BYTES));
    out.push(r);
  }
  return out;
}

const call = (request: Uint8Array, response: Uint8Array | null, delay: number): ScriptCall => ({ request, response, serverDelay: delay });

/** locate, fetch every record until the end-of-file answer, release */
export function ledgerReadCalls(name: string, data: Uint8Array, delay: number): ScriptCall[] {
  const rs = records(data);
  const out = [call(ledgerRequest(LEDGER_OP.LOCATE, name, 0), ledgerResponse(LEDGER_OP.LOCATE, LEDGER_STATUS.DONE, rs.length), delay)];
  for (let i = 0; i <= rs.length; i++) {
    out.push(
      call(
        ledgerRequest(LEDGER_OP.FETCH, name, i),
        i < rs.length ? ledgerResponse(LEDGER_OP.FETCH, LEDGER_STATUS.DONE, i, rs[i]) : ledgerResponse(LEDGER_OP.FETCH, LEDGER_STATUS.END_OF_FILE, i),
        delay,
      ),
    );
  }
  out.push(call(ledgerRequest(LEDGER_OP.RELEASE, name, 0), ledgerResponse(LEDGER_OP.RELEASE, LEDGER_STATUS.DONE, 0), delay));
  return out;
}

/** locate, fetch the chosen records of a (large) ledger file, release */
export function ledgerFetchCalls(name: string, recordOf: (n: number) => Uint8Array, count: number, wanted: number[], delay: number): ScriptCall[] {
  const out = [call(ledgerRequest(LEDGER_OP.LOCATE, name, 0), ledgerResponse(LEDGER_OP.LOCATE, LEDGER_STATUS.DONE, count), delay)];
  for (const n of wanted) out.push(call(ledgerRequest(LEDGER_OP.FETCH, name, n), ledgerResponse(LEDGER_OP.FETCH, LEDGER_STATUS.DONE, n, recordOf(n)), delay));
  out.push(call(ledgerRequest(LEDGER_OP.RELEASE, name, 0), ledgerResponse(LEDGER_OP.RELEASE, LEDGER_STATUS.DONE, 0), delay));
  return out;
}

/** locate, store every record, release */
export function ledgerWriteCalls(name: string, data: Uint8Array, delay: number): ScriptCall[] {
  const rs = records(data);
  const out = [call(ledgerRequest(LEDGER_OP.LOCATE, name, 0), ledgerResponse(LEDGER_OP.LOCATE, LEDGER_STATUS.DONE, 0), delay)];
  rs.forEach((r, i) => out.push(call(ledgerRequest(LEDGER_OP.STORE, name, i, r), ledgerResponse(LEDGER_OP.STORE, LEDGER_STATUS.DONE, i), delay)));
  out.push(call(ledgerRequest(LEDGER_OP.RELEASE, name, 0), ledgerResponse(LEDGER_OP.RELEASE, LEDGER_STATUS.DONE, rs.length), delay));
  return out;
}

const STATUS_NAMES = { '0': 'done', '1': 'end of file', '2': 'no such file', '3': 'ledger full' };

const header = (role: 'request' | 'response') =>
  role === 'request'
    ? [
        { id: 'op', type: 'u8', role: 'call', meaning: 'operation' },
        { id: 'len', type: 'u8', role: 'length', meaning: 'octets after this one' },
        { id: 'name', type: 'cpm-name', role: 'file-name', meaning: 'file name, 8 + 3, attributes in the high bits' },
        { id: 'record', type: 'u16be', role: 'record-number', meaning: 'record number, most significant octet first' },
      ]
    : [
        { id: 'op', type: 'u8', role: 'call', meaning: 'the request’s operation' },
        { id: 'len', type: 'u8', role: 'length', meaning: 'octets after this one' },
        { id: 'status', type: 'u8', role: 'status', values: STATUS_NAMES },
        { id: 'record', type: 'u16be', role: 'record-number', meaning: 'the request’s record number (locate: the file’s record count)' },
      ];

/** The ledger envelope in the field-map language, written from the design above. */
export const LEDGER_MAP_DOCUMENT: FieldMapInput = {
  name: 'Saltmarsh ledger envelope',
  version: 1,
  description: 'The invented second demo protocol: op, length octet, name, big-endian record number; no tag, answers pair by order.',
  callCode: { offset: 0, type: 'u8', responseMask: 0 },
  calls: [
    { code: LEDGER_OP.LOCATE, name: 'locate', meaning: 'opens a file; the answer gives its record count', file: 'open' },
    { code: LEDGER_OP.FETCH, name: 'fetch', meaning: 'reads one record', file: 'read-sequential' },
    { code: LEDGER_OP.STORE, name: 'store', meaning: 'writes one record', file: 'write-random' },
    { code: LEDGER_OP.RELEASE, name: 'release', meaning: 'closes the file' },
  ],
  layouts: [
    { id: 'store-request', when: { calls: [LEDGER_OP.STORE], direction: 'request' }, fields: [...header('request'), { id: 'data', type: 'bytes', length: LEDGER_RECORD_BYTES, role: 'record-data' }] },
    { id: 'request', when: { direction: 'request' }, fields: header('request') },
    { id: 'fetch-response', when: { calls: [LEDGER_OP.FETCH], direction: 'response' }, fields: [...header('response'), { id: 'data', type: 'bytes', length: 'rest', role: 'record-data' }] },
    { id: 'response', when: { direction: 'response' }, fields: header('response') },
  ] as FieldMapInput['layouts'],
};
