// Recovered files: file contents rebuilt from the 128-byte records seen in exchanges.
//
// Where a record goes:
// - sequential read/write: the REQUEST's FCB position, record = (s2 * 32 + ex) * 128 + cr.
//   The BDOS advances cr after the transfer, so the response's FCB already points at the next
//   record; the request's FCB is the position the record was read from or written to.
//   (CP/M 2.2 Interface Guide: an extent holds 128 records = 16 KB, a module s2 holds 32
//   extents = 512 KB; set random record (36) computes r0–r2 by the same rule — from memory.)
// - random read/write: r0–r2 of the request, r0 least significant.
// - boot load: the record number of the request, into a file named for the boot image.
// Record data of a read is in the response, of a write in the request; only calls the server
// answered with status 0 place a record. A sequential read answered "end of file" (status 1)
// at record n, or a boot load answered "past the end" at n, says the file has n records.
// A write replaces a record's contents (the latest write wins). A read that returns other
// contents than the record already has (from an earlier read or write) is a conflict between
// two transfers; the earlier contents are kept.
import { decodeCpmName, type CpmAttributes } from './apply';
import { BDOS, CPM_RECORD_BYTES } from './cpm-envelope';
import type { Exchange, FrameRef } from './exchanges';
import type { FieldMap } from './field-map';

export type RecordCoverage = 'seen' | 'missing' | 'conflict';

export interface RecoveredFile {
  /** "0:HYMNS.TXT" (user number and name) or "boot:WRENBOOT.SYS" */
  key: string;
  name: string;
  kind: 'file' | 'boot-image';
  /** CP/M user number of the calls, null when unknown (boot images) */
  user: number | null;
  /** stations that transferred records of the file */
  stations: number[];
  /** records from 0 to the end of file when it was seen, else to the highest record seen */
  recordCount: number;
  /** true when an end-of-file answer fixed recordCount */
  endKnown: boolean;
  /** recordCount × 128 octets; missing records are zeros */
  bytes: Uint8Array;
  /** per record */
  coverage: RecordCoverage[];
  /** the records seen with different contents, and the exchanges that carried them */
  conflicts: { record: number; requests: FrameRef[] }[];
  /** every exchange about this file (open, reads, writes, close…), by the request's first send */
  exchanges: FrameRef[];
}

export interface FileCalls {
  opens: readonly number[];
  sequentialRead: number;
  sequentialWrite: number;
  randomReads: readonly number[];
  randomWrites: readonly number[];
  bootLoad: number | null;
}

/** The CP/M call envelope's file calls (function numbers: CP/M 2.2 Interface Guide, from memory). */
export const CPM_FILE_CALL_SET: FileCalls = {
  opens: [BDOS.OPEN_FILE, BDOS.MAKE_FILE],
  sequentialRead: BDOS.READ_SEQUENTIAL,
  sequentialWrite: BDOS.WRITE_SEQUENTIAL,
  randomReads: [BDOS.READ_RANDOM],
  randomWrites: [BDOS.WRITE_RANDOM, BDOS.WRITE_RANDOM_ZERO_FILL],
  bootLoad: BDOS.BOOT_LOAD,
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
    sequentialRead: of('read-sequential')[0] ?? -1,
    sequentialWrite: of('write-sequential')[0] ?? -1,
    randomReads: of('read-random'),
    randomWrites: of('write-random'),
    bootLoad: of('boot-load')[0] ?? null,
  };
}

interface Building {
  file: Omit<RecoveredFile, 'bytes' | 'coverage' | 'recordCount' | 'endKnown' | 'stations' | 'conflicts'>;
  records: Map<number, { data: Uint8Array; from: FrameRef; conflict: FrameRef[] | null }>;
  end: number | null;
  stations: Set<number>;
}

const sameBytes = (a: Uint8Array, b: Uint8Array) => a.length === b.length && a.every((v, i) => v === b[i]);

/** Rebuilds files from exchanges (in any order; they are sorted by first send). */
export function recoverFiles(exchanges: readonly Exchange[], calls: FileCalls = CPM_FILE_CALL_SET): RecoveredFile[] {
  const files = new Map<string, Building>();
  const get = (key: string, name: string, kind: RecoveredFile['kind'], user: number | null) => {
    let b = files.get(key);
    if (!b) files.set(key, (b = { file: { key, name, kind, user, exchanges: [] }, records: new Map(), end: null, stations: new Set() }));
    return b;
  };
  const sorted = [...exchanges].sort((a, b) => a.firstSample - b.firstSample);
  for (const ex of sorted) {
    const code = ex.callCode;
    if (code === null || !ex.fileName) continue;
    const boot = code === calls.bootLoad;
    const user = boot ? null : ex.requestCall.user;
    const key = boot ? `boot:${ex.fileName}` : `${user ?? 0}:${ex.fileName}`;
    // names with wildcards (search patterns) are not files
    if (ex.fileName.includes('?')) continue;
    const isRead = code === calls.sequentialRead || calls.randomReads.includes(code) || boot;
    const isWrite = code === calls.sequentialWrite || calls.randomWrites.includes(code);
    const isOpen = calls.opens.includes(code);
    const known = files.get(key);
    if (!isRead && !isWrite && !isOpen && !known) continue;
    const b = known ?? get(key, ex.fileName, boot ? 'boot-image' : 'file', user);
    b.file.exchanges.push(ex.request);
    if (!isRead && !isWrite) continue;
    const record = ex.requestCall.recordNumber;
    if (record === null || ex.status === null) continue;
    if (ex.status !== 0) {
      // end of file (sequential read) / past the end of the image (boot load)
      if (ex.status === 1 && (code === calls.sequentialRead || boot)) b.end = b.end === null ? record : Math.min(b.end, record);
      continue;
    }
    const data = isRead ? ex.responseCall?.recordData : ex.requestCall.recordData;
    if (!data || data.length !== CPM_RECORD_BYTES) continue;
    b.stations.add(ex.station);
    const have = b.records.get(record);
    if (!have) b.records.set(record, { data, from: ex.request, conflict: null });
    else if (isWrite) {
      // a write replaces the contents: an update, not a disagreement
      have.data = data;
      have.from = ex.request;
    } else if (!sameBytes(have.data, data)) (have.conflict ??= [have.from]).push(ex.request);
  }
  const out: RecoveredFile[] = [];
  for (const b of files.values()) {
    let highest = -1;
    for (const r of b.records.keys()) highest = Math.max(highest, r);
    const recordCount = Math.max(highest + 1, b.end ?? 0);
    const bytes = new Uint8Array(recordCount * CPM_RECORD_BYTES);
    const coverage: RecordCoverage[] = new Array(recordCount).fill('missing');
    const conflicts: RecoveredFile['conflicts'] = [];
    for (const [r, rec] of b.records) {
      bytes.set(rec.data, r * CPM_RECORD_BYTES);
      coverage[r] = rec.conflict ? 'conflict' : 'seen';
      if (rec.conflict) conflicts.push({ record: r, requests: rec.conflict });
    }
    conflicts.sort((x, y) => x.record - y.record);
    out.push({
      ...b.file,
      stations: [...b.stations].sort((x, y) => x - y),
      recordCount,
      endKnown: b.end !== null,
      bytes,
      coverage,
      conflicts,
    });
  }
  return out.sort((a, b) => a.key.localeCompare(b.key));
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
 * points at the n-th 32-byte entry of the 128-byte record it returns (CP/M 2.2 Interface Guide,
 * functions 17 and 18; entry = user, f1–f8, t1–t3, ex, s1, s2, rc, d0–d15 — from memory).
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
