// Recovered files: file contents rebuilt from the 128-byte records seen in exchanges.
//
// Where a record goes:
// - sequential read/write: the REQUEST's FCB position, record = (s2 * 32 + ex) * 128 + cr with
//   only the module bits of s2 (apply.ts, MODULE_MASK). The BDOS advances cr after the transfer,
//   so the response's FCB already points at the next record; the request's FCB is the position
//   the record was read from or written to. (CP/M 2.2 Operating System Manual, section 5.2: a
//   logical extent is 16 KB = 128 records, ex 0–31; that a module s2 holds 32 extents is from
//   memory of the CP/M 2.2 BDOS listing.)
// - random read/write: r0–r2 of the request, r0 least significant (CP/M 2.2 manual 5.2, Table 5-2).
// - boot load: the record number of the request, into a file named for the boot image.
// Record data of a read is in the response, of a write in the request; only calls the server
// answered with status 0 place a record. A write replaces a record's contents (the latest write
// wins). A read that returns other contents than the record already has (from an earlier read or
// write) is a conflict between two transfers; the earlier contents are kept. A make answered ok
// starts the file afresh (records seen before belong to the file it replaced).
//
// How big the file is, in time order of the exchanges (the latest statement wins):
// - an open answer's FCB: rc records in extent ex of module s2. rc 0–127 (CP/M 2.2 manual 5.2,
//   Table 5-2) ends the file in that extent: size (s2 * 32 + ex) * 128 + rc; 128, which the BDOS
//   sets when it opens a full extent (from memory of the CP/M 2.2 BDOS), only says "at least".
//   A file written at random with holes can end later than an extent that is not full; a record
//   read beyond the stated end then makes the end unknown again.
// - compute file size (35): r0–r2 of the answer, the virtual size (CP/M 2.2 manual 5.2, function 35).
// - a sequential read answered "end of file" (status 1) at record n, or a boot load answered
//   "past the end" at n: n records (CP/M 2.2 manual 5.2, function 20: nonzero when no data exist
//   at the next record).
// - a file made (22) in the capture has 0 records; writes past the known size grow it; a close
//   answered ok then fixes its end (a file made, written and closed within the capture). A write
//   past the size that the server never answered leaves the end unknown until the next statement.
// Without any of these the size is the highest record seen + 1 and the end is not known.
//
// Record locks (42/43, as MP/M II numbers them — CP/M 3 Programmer's Guide, section 3, functions
// 42 and 43): a lock answered 0 holds the record for its station until an unlock answered 0 or a
// close by that station (from memory of the MP/M II Programmer's Guide). Another station asking
// for a lock on a held record is a lock conflict, whatever the server answered: granted (two
// stations hold it — the server did not enforce the lock), refused, or unanswered.
import { decodeCpmName, type CpmAttributes } from './apply';
import { BDOS, CPM_RECORD_BYTES } from './cpm-envelope';
import type { Exchange, FrameRef } from './exchanges';
import type { FieldMap } from './field-map';

export type RecordCoverage = 'seen' | 'missing' | 'conflict';

/** Where a recovered file's size came from (see above). */
export const FILE_SIZE_SOURCES = ['end-of-file', 'compute-file-size', 'open', 'written', 'records-seen'] as const;
export type FileSizeSource = (typeof FILE_SIZE_SOURCES)[number];

/** the server's answer to a request for a lock another station holds */
export type LockConflictOutcome = 'granted' | 'refused' | 'unanswered';

export interface LockConflict {
  /** the record both stations locked or asked to lock */
  record: number;
  /** the station holding the lock, and the request of its lock exchange */
  holder: { station: number; lock: FrameRef };
  /** the other station, and the request of its lock exchange */
  requester: { station: number; lock: FrameRef };
  /** the server's answer to the requester: granted (both hold it), refused, or none */
  outcome: LockConflictOutcome;
}

export const RECOVERED_FILE_KINDS = ['file', 'boot-image'] as const;
export type RecoveredFileKind = (typeof RECOVERED_FILE_KINDS)[number];

export interface RecoveredFile {
  /** "0:HYMNS.TXT" (user number and name) or "boot:WRENBOOT.SYS" */
  key: string;
  name: string;
  kind: RecoveredFileKind;
  /** CP/M user number of the calls, null when unknown (boot images) */
  user: number | null;
  /** stations that transferred records of the file */
  stations: number[];
  /** records from 0 to the end of file when it is known, else to the highest record seen (or a stated lower bound) */
  recordCount: number;
  /** true when an answer fixed recordCount (sizeSource says which) */
  endKnown: boolean;
  /** what gave recordCount */
  sizeSource: FileSizeSource;
  /** the request of the exchange whose answer gave the size; null for records-seen */
  sizeFrom: FrameRef | null;
  /** recordCount × 128 octets; missing records are zeros */
  bytes: Uint8Array;
  /** per record */
  coverage: RecordCoverage[];
  /** the records seen with different contents, and the exchanges that carried them */
  conflicts: { record: number; requests: FrameRef[] }[];
  /** two stations holding or asking for a lock on the same record */
  lockConflicts: LockConflict[];
  /** every exchange about this file (open, reads, writes, close…), by the request's first send */
  exchanges: FrameRef[];
}

export interface FileCalls {
  /** open an existing file: the answer's rc with ex and s2 sizes it */
  opens: readonly number[];
  /** create an empty file */
  makes: readonly number[];
  closes: readonly number[];
  /** the answer's file-size field is the file's size in records */
  computeSize: number | null;
  sequentialRead: number;
  sequentialWrite: number;
  randomReads: readonly number[];
  randomWrites: readonly number[];
  bootLoad: number | null;
  lock: number | null;
  unlock: number | null;
}

/** The CP/M call envelope's file calls (function numbers: CP/M 2.2 manual 5.2; 42/43: MP/M II). */
export const CPM_FILE_CALL_SET: FileCalls = {
  opens: [BDOS.OPEN_FILE],
  makes: [BDOS.MAKE_FILE],
  closes: [BDOS.CLOSE_FILE],
  computeSize: BDOS.COMPUTE_FILE_SIZE,
  sequentialRead: BDOS.READ_SEQUENTIAL,
  sequentialWrite: BDOS.WRITE_SEQUENTIAL,
  randomReads: [BDOS.READ_RANDOM],
  randomWrites: [BDOS.WRITE_RANDOM, BDOS.WRITE_RANDOM_ZERO_FILL],
  bootLoad: BDOS.BOOT_LOAD,
  lock: BDOS.LOCK_RECORD,
  unlock: BDOS.UNLOCK_RECORD,
};

/**
 * The file calls a map names (its calls' `file` kinds); a map that names none is taken to use
 * the CP/M BDOS function numbers of the built-in envelope.
 */
export function fileCallsOf(map: FieldMap): FileCalls {
  const of = (k: string) => map.calls.filter((c) => c.file === k).map((c) => c.code);
  if (!map.calls.some((c) => c.file)) return CPM_FILE_CALL_SET;
  return {
    opens: of('open'),
    makes: of('make'),
    closes: of('close'),
    computeSize: of('compute-size')[0] ?? null,
    sequentialRead: of('read-sequential')[0] ?? -1,
    sequentialWrite: of('write-sequential')[0] ?? -1,
    randomReads: of('read-random'),
    randomWrites: of('write-random'),
    bootLoad: of('boot-load')[0] ?? null,
    lock: of('lock')[0] ?? null,
    unlock: of('unlock')[0] ?? null,
  };
}

/** CP/M 2.2 manual 5.2: an extent counts at most 128 records (rc 0–127; 128 from the BDOS for a full one). */
const EXTENT_RECORDS = 128;
/** directory codes 0–3 answer an open, make or close that worked (CP/M 2.2 manual 5.2, functions 15, 16, 22) */
const worked = (status: number | null) => status !== null && status <= 3;

interface Size {
  records: number;
  source: FileSizeSource;
  from: FrameRef | null;
  /** an exact count, not a lower bound; writes past it keep it exact, an unanswered one does not */
  exact: boolean;
  /** the end is known: exact and not waiting for the close of a file written in the capture */
  final: boolean;
}

interface Building {
  file: Pick<RecoveredFile, 'key' | 'name' | 'kind' | 'user' | 'exchanges'>;
  records: Map<number, { data: Uint8Array; from: FrameRef; conflict: FrameRef[] | null }>;
  size: Size | null;
  stations: Set<number>;
  /** record → stations holding its lock, with their lock request */
  locks: Map<number, { station: number; lock: FrameRef }[]>;
  lockConflicts: LockConflict[];
}

const sameBytes = (a: Uint8Array, b: Uint8Array) => a.length === b.length && a.every((v, i) => v === b[i]);

/** Rebuilds files from exchanges (in any order; they are sorted by first send). */
export function recoverFiles(exchanges: readonly Exchange[], calls: FileCalls = CPM_FILE_CALL_SET): RecoveredFile[] {
  const files = new Map<string, Building>();
  const sorted = [...exchanges].sort((a, b) => a.firstSample - b.firstSample);
  for (const ex of sorted) {
    const code = ex.callCode;
    if (code === null || !ex.fileName) continue;
    // names with wildcards (search patterns) are not files
    if (ex.fileName.includes('?')) continue;
    const boot = code === calls.bootLoad;
    const user = boot ? null : ex.requestCall.user;
    const key = boot ? `boot:${ex.fileName}` : `${user ?? 0}:${ex.fileName}`;
    const isRead = code === calls.sequentialRead || calls.randomReads.includes(code) || boot;
    const isWrite = code === calls.sequentialWrite || calls.randomWrites.includes(code);
    const starts = isRead || isWrite || calls.opens.includes(code) || calls.makes.includes(code) || code === calls.computeSize || code === calls.lock;
    let b = files.get(key);
    if (!b) {
      if (!starts) continue;
      b = { file: { key, name: ex.fileName, kind: boot ? 'boot-image' : 'file', user, exchanges: [] }, records: new Map(), size: null, stations: new Set(), locks: new Map(), lockConflicts: [] };
      files.set(key, b);
    }
    b.file.exchanges.push(ex.request);
    if (isRead || isWrite) transfer(b, ex, isRead, code === calls.sequentialRead || boot);
    else statement(b, ex, code, calls);
  }
  return [...files.values()].map(finish).sort((a, b) => a.key.localeCompare(b.key));
}

/** A read or write: places its record and moves the size. */
function transfer(b: Building, ex: Exchange, isRead: boolean, endsAtEof: boolean): void {
  const record = ex.requestCall.recordNumber;
  if (record === null) return;
  if (ex.status === null) {
    // never answered: a write past the size may or may not have happened, so the size is a lower bound
    if (!isRead && ex.outcome === 'unanswered' && b.size && record >= b.size.records) b.size = { ...b.size, exact: false, final: false };
    return;
  }
  if (ex.status !== 0) {
    // end of file (sequential read) / past the end of the image (boot load)
    if (ex.status === 1 && endsAtEof) setSize(b, record, 'end-of-file', ex.request);
    return;
  }
  const data = isRead ? ex.responseCall?.recordData : ex.requestCall.recordData;
  if (!data || data.length !== CPM_RECORD_BYTES) return;
  b.stations.add(ex.station);
  const have = b.records.get(record);
  if (!have) b.records.set(record, { data, from: ex.request, conflict: null });
  else if (!isRead) {
    // a write replaces the contents: an update, not a disagreement
    have.data = data;
    have.from = ex.request;
  } else if (!sameBytes(have.data, data)) (have.conflict ??= [have.from]).push(ex.request);
  const size = b.size;
  if (size && record >= size.records) {
    // a write grows the file (the end is known again once it is closed); a read past the size
    // shows it was not the end
    b.size = isRead
      ? { records: record + 1, source: 'records-seen', from: null, exact: false, final: false }
      : { records: record + 1, source: 'written', from: ex.request, exact: size.exact, final: false };
  }
}

/** An answer stated the size: exact (and final) unless it only gives a lower bound. */
function setSize(b: Building, records: number, source: FileSizeSource, from: FrameRef, exact = true): void {
  b.size = { records, source, from, exact, final: exact };
}

/** Calls that say something about the file without carrying a record: open, make, close, size, locks. */
function statement(b: Building, ex: Exchange, code: number, calls: FileCalls): void {
  const answer = ex.responseCall;
  if (calls.opens.includes(code) && worked(ex.status) && answer) {
    const { extent, module, recordCount } = answer;
    if (recordCount !== null) {
      const base = ((module ?? 0) * 32 + (extent ?? 0)) * EXTENT_RECORDS;
      if (recordCount < EXTENT_RECORDS) setSize(b, base + recordCount, 'open', ex.request);
      // a full extent: at least that many records; a size already known to be larger stands
      else if (!b.size || b.size.records < base + EXTENT_RECORDS) setSize(b, base + EXTENT_RECORDS, 'open', ex.request, false);
    }
  } else if (calls.makes.includes(code) && worked(ex.status)) {
    b.records.clear();
    b.size = { records: 0, source: 'written', from: ex.request, exact: true, final: false };
  } else if (code === calls.computeSize && ex.status === 0 && answer?.fileSize != null) {
    setSize(b, answer.fileSize, 'compute-file-size', ex.request);
  } else if (calls.closes.includes(code) && worked(ex.status)) {
    if (b.size?.exact) b.size.final = true;
    for (const [record, holders] of b.locks) b.locks.set(record, holders.filter((h) => h.station !== ex.station));
  } else if (code === calls.lock) lock(b, ex);
  else if (code === calls.unlock && ex.status === 0) {
    const record = ex.requestCall.recordNumber;
    if (record !== null) b.locks.set(record, (b.locks.get(record) ?? []).filter((h) => h.station !== ex.station));
  }
}

function lock(b: Building, ex: Exchange): void {
  const record = ex.requestCall.recordNumber;
  if (record === null) return;
  const holders = b.locks.get(record) ?? [];
  const outcome: LockConflict['outcome'] = ex.status === null ? 'unanswered' : ex.status === 0 ? 'granted' : 'refused';
  for (const h of holders) {
    if (h.station !== ex.station) b.lockConflicts.push({ record, holder: { station: h.station, lock: h.lock }, requester: { station: ex.station, lock: ex.request }, outcome });
  }
  if (outcome === 'granted' && !holders.some((h) => h.station === ex.station)) b.locks.set(record, [...holders, { station: ex.station, lock: ex.request }]);
}

function finish(b: Building): RecoveredFile {
  let highest = -1;
  for (const r of b.records.keys()) highest = Math.max(highest, r);
  const size = b.size;
  const beyond = size !== null && highest + 1 > size.records;
  const recordCount = Math.max(highest + 1, size?.records ?? 0);
  const bytes = new Uint8Array(recordCount * CPM_RECORD_BYTES);
  const coverage: RecordCoverage[] = new Array(recordCount).fill('missing');
  const conflicts: RecoveredFile['conflicts'] = [];
  for (const [r, rec] of b.records) {
    bytes.set(rec.data, r * CPM_RECORD_BYTES);
    coverage[r] = rec.conflict ? 'conflict' : 'seen';
    if (rec.conflict) conflicts.push({ record: r, requests: rec.conflict });
  }
  conflicts.sort((x, y) => x.record - y.record);
  return {
    ...b.file,
    stations: [...b.stations].sort((x, y) => x - y),
    recordCount,
    endKnown: size !== null && size.final && !beyond,
    sizeSource: size === null || beyond ? 'records-seen' : size.source,
    sizeFrom: size === null || beyond ? null : size.from,
    bytes,
    coverage,
    conflicts,
    lockConflicts: b.lockConflicts,
  };
}

/** Records that no exchange delivered, as [first, last] ranges. */
export function missingRanges(coverage: readonly RecordCoverage[]): [number, number][] {
  const out: [number, number][] = [];
  for (let i = 0; i < coverage.length; i++) {
    if (coverage[i] !== 'missing') continue;
    let j = i;
    while (j + 1 < coverage.length && coverage[j + 1] === 'missing') j++;
    out.push([i, j]);
    i = j;
  }
  return out;
}

/** A file named by a directory search answer. */
export interface ListedEntry {
  station: number;
  /** the search exchange's request */
  request: FrameRef;
  user: number;
  name: string;
  attributes: CpmAttributes;
  /** extent number and records in that extent, as the directory entry says */
  ex: number;
  rc: number;
}

/**
 * Files named in directory searches: a search first/next answered with directory code n (0–3)
 * points at the n-th 32-byte entry of the 128-byte record it returns (CP/M 2.2 Operating System
 * Manual, section 5.2, functions 17 and 18). Entry = user, f1–f8, t1–t3, ex, s1, s2, rc, d0–d15:
 * the FCB's first 32 bytes with the user number in place of dr (from memory of the manual).
 */
export function directoryListing(exchanges: readonly Exchange[], searchCalls: readonly number[] = [BDOS.SEARCH_FIRST, BDOS.SEARCH_NEXT]): ListedEntry[] {
  const out: ListedEntry[] = [];
  for (const ex of [...exchanges].sort((a, b) => a.firstSample - b.firstSample)) {
    if (ex.callCode === null || !searchCalls.includes(ex.callCode)) continue;
    const data = ex.responseCall?.recordData;
    if (!data || ex.status === null || ex.status > 3) continue;
    const entry = data.subarray(ex.status * 32, ex.status * 32 + 32);
    const { text, attributes } = decodeCpmName(entry.subarray(1, 12));
    out.push({ station: ex.station, request: ex.request, user: entry[0], name: text, attributes, ex: entry[12], rc: entry[15] });
  }
  return out;
}
