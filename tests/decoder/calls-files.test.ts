import { describe, expect, it } from 'vitest';
import { BDOS, CPM_ENVELOPE, pairExchanges, type DecodedCall, type Exchange, directoryListing, missingRanges, recoverFiles } from '../../shared/decoder/calls';
import { bootCalls, computeSizeCalls, cpmName, directoryCalls, readFileCalls, readRandomCalls, requestInfo, responseInfo, Tags, toRecords, updateRecordCalls, writeFileCalls, type ScriptCall, type SessionScript, seededRng, encodeSession } from '../../shared/decoder/encode';
import { BIT_RATE, decodeScript, framesOfSession, pairDecoded } from './calls-helpers';

const randomBytes = (n: number, seed: number) => {
  const rng = seededRng(seed);
  return Uint8Array.from({ length: n }, () => Math.floor(rng() * 256));
};
const joinRecords = (data: Uint8Array, pad = 0x1a) => {
  const rs = toRecords(data, pad);
  const out = new Uint8Array(rs.length * 128);
  rs.forEach((r, i) => out.set(r, i * 128));
  return out;
};

/** one or more stations' calls → encoded frames (no waveform) → exchanges → files */
function recover(stations: { address: number; calls: ScriptCall[] }[]) {
  const script: SessionScript = {
    bitRate: BIT_RATE,
    stations: stations.map((s, i) => ({ address: s.address, port: `p${i + 1}`, start: 0.0001 * (i + 1), calls: s.calls })),
  };
  const session = encodeSession(script);
  const { frames, period, roles } = framesOfSession(session);
  const { exchanges } = pairExchanges(frames, [], { map: CPM_ENVELOPE, links: roles, samplePeriodSeconds: period });
  return { files: recoverFiles(exchanges), exchanges, session };
}

describe('recovered files', () => {
  it('rebuilds a sequentially read file byte for byte, its size fixed by the end-of-file answer', () => {
    const data = randomBytes(128 * 5, 1);
    const { files } = recover([{ address: 0x23, calls: readFileCalls('HYMNS.TXT', data, { tags: new Tags(), delay: 0.0004 }) }]);
    expect(files).toHaveLength(1);
    const f = files[0];
    expect(f).toMatchObject({ key: '0:HYMNS.TXT', name: 'HYMNS.TXT', kind: 'file', recordCount: 5, endKnown: true, stations: [0x23] });
    expect(f.bytes).toEqual(data);
    expect(f.coverage.every((c) => c === 'seen')).toBe(true);
    // open, 5 reads, the end-of-file read and close
    expect(f.exchanges).toHaveLength(8);
  });

  // CP/M 2.2 manual 5.2: 16K logical extents of 128 records, so record 128 is ex 1, cr 0.
  it('places records across an extent boundary by the request FCB’s ex and cr', () => {
    const data = randomBytes(128 * 131, 2);
    const { files } = recover([{ address: 0x21, calls: readFileCalls('REGISTER.DAT', data, { tags: new Tags(), delay: 0.0002 }) }]);
    expect(files[0].recordCount).toBe(131);
    expect(files[0].bytes).toEqual(data);
  });

  it('pads a text file’s last record with ^Z as CP/M stores it', () => {
    const text = new TextEncoder().encode('Hymns for Advent: 1, 7, 23, 99\r\n');
    const { files } = recover([{ address: 0x23, calls: readFileCalls('HYMNS.TXT', text, { tags: new Tags(), delay: 0.0004 }) }]);
    expect(files[0].bytes).toEqual(joinRecords(text));
    expect(files[0].bytes.subarray(0, text.length)).toEqual(text);
  });

  it('shows exactly the record that never arrived as missing', () => {
    const data = randomBytes(128 * 6, 3);
    const calls = readFileCalls('BAPTISMS.DAT', data, { tags: new Tags(), delay: 0.0004 });
    // calls: open, read 0 … read 5, eof read, close → read 3 is calls[4]
    calls[4].response = null;
    calls[4].sends = 1;
    const { files } = recover([{ address: 0x21, calls }]);
    const f = files[0];
    expect(f.coverage).toEqual(['seen', 'seen', 'seen', 'missing', 'seen', 'seen']);
    expect(missingRanges(f.coverage)).toEqual([[3, 3]]);
    const expected = data.slice();
    expected.fill(0, 3 * 128, 4 * 128);
    expect(f.bytes).toEqual(expected);
  });

  it('rebuilds a file read at random from r0–r2, and marks a record two transfers disagree on as conflicting', () => {
    const data = randomBytes(128 * 4, 4);
    const other = data.slice();
    other[2 * 128 + 5] ^= 0xff;
    const { files } = recover([
      { address: 0x21, calls: readRandomCalls('PARISH.DAT', data, [3, 1, 0, 2], { tags: new Tags(), delay: 0.0003 }) },
      { address: 0x22, calls: readRandomCalls('PARISH.DAT', other, [2], { tags: new Tags(), delay: 0.0003 }) },
    ]);
    const f = files[0];
    expect(f.recordCount).toBe(4);
    expect(f.endKnown).toBe(false);
    expect(f.coverage).toEqual(['seen', 'seen', 'conflict', 'seen']);
    expect(f.conflicts.map((c) => [c.record, c.requests.length])).toEqual([[2, 2]]);
    // the earliest transfer's contents are kept: station 0x22 asked for record 2 first
    expect(f.bytes).toEqual(other);
    expect(f.stations).toEqual([0x21, 0x22]);
  });

  it('rebuilds a file made, written and closed within the capture, its end known from the writes', () => {
    const data = randomBytes(128 * 3, 5);
    const { files, exchanges } = recover([{ address: 0x22, calls: writeFileCalls('ACCOUNTS.DAT', data, { tags: new Tags(), delay: 0.0005 }) }]);
    const lastWrite = exchanges.filter((e) => e.callCode === BDOS.WRITE_SEQUENTIAL).at(-1)!;
    expect(files[0]).toMatchObject({ name: 'ACCOUNTS.DAT', recordCount: 3, endKnown: true, sizeSource: 'written', sizeFrom: lastWrite.request });
    expect(files[0].bytes).toEqual(data);
  });

  it('leaves the end of a made and written file unknown while it is not closed', () => {
    const calls = writeFileCalls('ACCOUNTS.DAT', randomBytes(128 * 3, 5), { tags: new Tags(), delay: 0.0005 });
    const { files } = recover([{ address: 0x22, calls: calls.slice(0, -1) }]);
    expect(files[0]).toMatchObject({ recordCount: 3, endKnown: false, sizeSource: 'written' });
  });

  // CP/M 2.2 Operating System Manual 5.2, Table 5-2: rc is the record count of extent ex (0–127);
  // open (function 15) fills in the FCB. 128 for a full extent is the BDOS's value (from memory).
  it('sizes a file from the open answer’s rc, ex and s2 and marks its end known', () => {
    const tags = new Tags();
    const data = randomBytes(128 * 9, 7);
    const open = { request: requestInfo(BDOS.OPEN_FILE, 1, 0, { fcb: { name: 'PARISH.DAT' } }), response: responseInfo(BDOS.OPEN_FILE, 1, 0, { fcb: { name: 'PARISH.DAT', rc: 9 } }), serverDelay: 0.0003 };
    tags.next();
    const { files, exchanges } = recover([{ address: 0x21, calls: [open, ...readRandomCalls('PARISH.DAT', data, [0, 4], { tags, delay: 0.0003 })] }]);
    expect(files[0]).toMatchObject({ recordCount: 9, endKnown: true, sizeSource: 'open', sizeFrom: exchanges[0].request });
    expect(missingRanges(files[0].coverage)).toEqual([
      [1, 3],
      [5, 8],
    ]);
  });

  it('sizes a file opened at a later extent of a later module, the BDOS’s flag set in s2', () => {
    // extent 3 of module 1 holds 20 records: (1 * 32 + 3) * 128 + 20 records in all
    const open = { request: requestInfo(BDOS.OPEN_FILE, 1, 0, { fcb: { name: 'BIG.DAT', ex: 3, s2: 1 } }), response: responseInfo(BDOS.OPEN_FILE, 1, 0, { fcb: { name: 'BIG.DAT', ex: 3, s2: 0x81, rc: 20 } }), serverDelay: 0.0003 };
    const { files } = recover([{ address: 0x21, calls: [open] }]);
    expect(files[0]).toMatchObject({ recordCount: (32 + 3) * 128 + 20, endKnown: true, sizeSource: 'open' });
  });

  it('takes a full extent in an open answer (rc 128) as a lower bound only', () => {
    const data = randomBytes(128 * 200, 8);
    const calls = readFileCalls('LONG.DAT', data, { tags: new Tags(), delay: 0.0002 });
    const { files } = recover([{ address: 0x21, calls: calls.slice(0, 3) }]); // open and two reads
    expect(files[0]).toMatchObject({ recordCount: 128, endKnown: false, sizeSource: 'open' });
    const whole = recover([{ address: 0x21, calls }]).files[0];
    expect(whole).toMatchObject({ recordCount: 200, endKnown: true, sizeSource: 'end-of-file' });
    expect(whole.bytes).toEqual(data);
  });

  // CP/M 2.2 Operating System Manual 5.2, function 35: r0–r2 are set to the virtual file size.
  it('sizes a file from the compute file size answer and marks its end known', () => {
    const tags = new Tags();
    const calls = [...computeSizeCalls('REGISTER.DAT', 37, { tags, delay: 0.0003 }), ...readRandomCalls('REGISTER.DAT', randomBytes(128 * 37, 9), [36], { tags, delay: 0.0003 })];
    const { files, exchanges } = recover([{ address: 0x23, calls }]);
    expect(files[0]).toMatchObject({ recordCount: 37, endKnown: true, sizeSource: 'compute-file-size', sizeFrom: exchanges[0].request });
  });

  it('makes the end unknown again when a record is read past the end an answer stated', () => {
    const tags = new Tags();
    const data = randomBytes(128 * 30, 10);
    const calls = [...computeSizeCalls('SPARSE.DAT', 5, { tags, delay: 0.0003 }), ...readRandomCalls('SPARSE.DAT', data, [2, 29], { tags, delay: 0.0003 })];
    const { files } = recover([{ address: 0x23, calls }]);
    expect(files[0]).toMatchObject({ recordCount: 30, endKnown: false, sizeSource: 'records-seen', sizeFrom: null });
  });

  // The BDOS sets bit 7 of s2 on open (from memory of the CP/M 2.2 BDOS listing); a station that
  // forwards its FCB unchanged must not push records to module 8 (record 524 288 and beyond).
  it('rebuilds a file whose requests carry the BDOS’s flag in s2 at its true size', () => {
    const data = randomBytes(128 * 6, 11);
    const { files } = recover([{ address: 0x23, calls: readFileCalls('HYMNS.TXT', data, { tags: new Tags(), delay: 0.0004, bdosFlag: true }) }]);
    expect(files[0]).toMatchObject({ recordCount: 6, endKnown: true });
    expect(files[0].bytes).toEqual(data);
  });

  it('takes a random write answered ok, and leaves out a write the server refused', () => {
    const before = new Uint8Array(128).fill(1);
    const after = new Uint8Array(128).fill(2);
    const calls = updateRecordCalls('ACCOUNTS.DAT', 7, before, after, { tags: new Tags(), delay: 0.0004 });
    const refusedTag = 200;
    calls.push({
      request: requestInfo(BDOS.WRITE_RANDOM, refusedTag, 0, { fcb: { name: 'ACCOUNTS.DAT', random: 9 }, record: after }),
      response: responseInfo(BDOS.WRITE_RANDOM, refusedTag, 5, { fcb: { name: 'ACCOUNTS.DAT', random: 9 } }),
      serverDelay: 0.0004,
    });
    const { files } = recover([{ address: 0x22, calls }]);
    const f = files[0];
    expect(f.recordCount).toBe(8);
    // record 7 was read (before) and then written (after): the write is the newer contents
    expect(f.coverage[7]).toBe('seen');
    expect(f.bytes.subarray(7 * 128)).toEqual(after);
    expect(f.coverage.slice(0, 7).every((c) => c === 'missing')).toBe(true);
  });

  it('marks a read that disagrees with what was written before it as a conflict', () => {
    const written = new Uint8Array(128).fill(3);
    const readBack = new Uint8Array(128).fill(4);
    const tags = new Tags();
    const calls: ScriptCall[] = [];
    let tag = tags.next();
    calls.push({ request: requestInfo(BDOS.WRITE_RANDOM, tag, 0, { fcb: { name: 'A.DAT', random: 0 }, record: written }), response: responseInfo(BDOS.WRITE_RANDOM, tag, 0, { fcb: { name: 'A.DAT' } }), serverDelay: 0.0003 });
    tag = tags.next();
    calls.push({ request: requestInfo(BDOS.READ_RANDOM, tag, 0, { fcb: { name: 'A.DAT', random: 0 } }), response: responseInfo(BDOS.READ_RANDOM, tag, 0, { fcb: { name: 'A.DAT' }, record: readBack }), serverDelay: 0.0003 });
    const { files } = recover([{ address: 0x22, calls }]);
    expect(files[0].coverage).toEqual(['conflict']);
    expect(files[0].bytes).toEqual(written);
  });

  // Record lock and unlock, 42 and 43 as MP/M II numbers them (CP/M 3 Programmer's Guide, section
  // 3, functions 42 and 43); status 8 "record locked by another" from memory of the MP/M II guide.
  describe('record locks', () => {
    const f = { name: 'ACCOUNTS.DAT', random: 4 };
    const lockCall = (tags: Tags, code: number, status: number | null, thinkTime: number, record = 4): ScriptCall => {
      const tag = tags.next();
      const fcb = { ...f, random: record };
      return { request: requestInfo(code, tag, 0, { fcb }), response: status === null ? null : responseInfo(code, tag, status, { fcb }), serverDelay: 0.0003, thinkTime, sends: 1 };
    };
    const twoStations = (first: ScriptCall[], second: ScriptCall[]) => {
      const r = recover([
        { address: 0x21, calls: first },
        { address: 0x22, calls: second },
      ]);
      const id = (station: number, code: number) => r.exchanges.find((e) => e.station === station && e.callCode === code)!.request;
      return { ...r, id, file: r.files.find((x) => x.name === 'ACCOUNTS.DAT')! };
    };

    it('records a conflict when a second station asks to lock a record another holds and is refused', () => {
      const a = new Tags();
      const b = new Tags();
      const { file, id } = twoStations([lockCall(a, 42, 0, 0.0003), lockCall(a, 43, 0, 0.02)], [lockCall(b, 42, 8, 0.005)]);
      expect(file.lockConflicts).toEqual([{ record: 4, holder: { station: 0x21, lock: id(0x21, 42) }, requester: { station: 0x22, lock: id(0x22, 42) }, outcome: 'refused' }]);
    });

    it('records a conflict the server let happen: both stations granted the same record', () => {
      const a = new Tags();
      const b = new Tags();
      const { file } = twoStations([lockCall(a, 42, 0, 0.0003)], [lockCall(b, 42, 0, 0.005), lockCall(b, 42, null, 0.001, 4)]);
      expect(file.lockConflicts.map((c) => [c.holder.station, c.requester.station, c.outcome])).toEqual([
        [0x21, 0x22, 'granted'],
        // the unanswered second ask of 0x22 meets 0x21's lock again (0x22's own lock is no conflict)
        [0x21, 0x22, 'unanswered'],
      ]);
    });

    it('finds no conflict after the holder unlocks, nor between different records', () => {
      const a = new Tags();
      const b = new Tags();
      const unlocked = twoStations([lockCall(a, 42, 0, 0.0003), lockCall(a, 43, 0, 0.0003)], [lockCall(b, 42, 0, 0.02)]);
      expect(unlocked.file.lockConflicts).toEqual([]);
      const c = new Tags();
      const d = new Tags();
      const apart = twoStations([lockCall(c, 42, 0, 0.0003)], [lockCall(d, 42, 0, 0.005, 5)]);
      expect(apart.file.lockConflicts).toEqual([]);
    });
  });

  it('recovers a network boot image as a file through the whole decoder', () => {
    const image = randomBytes(128 * 4 + 17, 6);
    const d = decodeScript(
      { bitRate: BIT_RATE, stations: [{ address: 0x21, port: 'p1', start: 0.0001, calls: bootCalls('WRENBOOT.SYS', image, { tags: new Tags(), delay: 0.0006 }) }] },
      { clocked: false, faults: { jitter: 0.1, seed: 9 } },
    );
    const files = recoverFiles(pairDecoded(d).exchanges);
    expect(files.map((f) => [f.key, f.kind, f.recordCount, f.endKnown])).toEqual([['boot:WRENBOOT.SYS', 'boot-image', 5, true]]);
    expect(files[0].bytes).toEqual(joinRecords(image, 0));
  });
});

describe('directory listings', () => {
  // CP/M 2.2 manual 5.2, functions 17 and 18: the directory code 0–3 picks one of the four 32-byte
  // entries of the record read into the DMA buffer; 0FFH means no (more) matches. The entry layout
  // (user, name, ex, s1, s2, rc, d0–d15) is the FCB's first 32 bytes with dr as the user number
  // (from memory of the manual's directory description).
  it('lists the files a search first/next sequence names, attributes included', () => {
    const listed = [
      { name: 'BAPTISMS.DAT', rc: 3 },
      { name: 'MARRIAGE.DAT', rc: 5 },
      { name: 'HYMNS.TXT', rc: 3 },
      { name: 'ACCOUNTS.DAT', rc: 12 },
      { name: 'WRENBOOT.SYS', rc: 8, attributes: { readOnly: true, system: true } },
    ];
    const { exchanges } = recover([{ address: 0x21, calls: directoryCalls('????????.???', listed, { tags: new Tags(), delay: 0.0005 }) }]);
    const entries = directoryListing(exchanges);
    expect(entries.map((e) => [e.name, e.rc])).toEqual(listed.map((f) => [f.name, f.rc]));
    expect(entries[4].attributes).toMatchObject({ readOnly: true, system: true });
    expect(exchanges.at(-1)!.statusMeaning).toBe('no more matching files');
  });
});

// ---- the rules on hand-made exchanges (one per call, in the order given by firstSample) ----

describe('recovered files from hand-made exchanges', () => {
  let at = 0;
  const rec = (fill: number, length = 128) => new Uint8Array(length).fill(fill);
  interface Spec {
    code: number | null;
    file?: string | null;
    user?: number | null;
    record?: number | null;
    data?: Uint8Array | null;
    status?: number | null;
    station?: number;
    outcome?: Exchange['outcome'];
    answer?: Partial<DecodedCall> | null;
    time?: number;
  }
  const ex = (o: Spec): Exchange => {
    const t = o.time ?? (at += 10);
    const isWrite = o.code === BDOS.WRITE_SEQUENTIAL || o.code === BDOS.WRITE_RANDOM;
    const status = o.status === undefined ? 0 : o.status;
    const requestCall = { callCode: o.code, fileName: o.file === undefined ? 'A.B' : o.file, user: o.user === undefined ? 0 : o.user, recordNumber: o.record ?? null, recordData: isWrite ? (o.data ?? null) : null } as DecodedCall;
    const responseCall =
      status === null && o.answer === undefined
        ? null
        : ({ status, recordData: isWrite ? null : (o.data ?? null), extent: null, module: null, recordCount: null, fileSize: null, ...(o.answer ?? {}) } as DecodedCall);
    return {
      station: o.station ?? 0x21,
      request: { link: 'up', seq: t },
      requestCall,
      retries: [],
      responses: [],
      damagedResponses: [],
      responseCall,
      callCode: o.code,
      callName: null,
      tag: null,
      recordNumber: o.record ?? null,
      fileName: requestCall.fileName,
      status,
      statusMeaning: null,
      firstSample: t,
      answeredSendLastSample: t,
      responseFirstSample: null,
      rttSeconds: null,
      outcome: o.outcome ?? (status === null ? 'unanswered' : 'answered'),
      serviceDelaySeconds: null,
    };
  };
  const W = BDOS.WRITE_RANDOM;
  const R = BDOS.READ_RANDOM;
  const one = (list: Exchange[]) => {
    const files = recoverFiles(list);
    expect(files).toHaveLength(1);
    return files[0];
  };

  it('takes exchanges in time order whatever order they come in: the later write wins', () => {
    const first = ex({ code: W, record: 0, data: rec(1), time: 10 });
    const second = ex({ code: W, record: 0, data: rec(2), time: 20 });
    expect(one([second, first]).bytes).toEqual(rec(2));
  });

  it('lists files by key, keys made of user number and name, and skips calls without a code, name or with wildcards', () => {
    const files = recoverFiles([
      ex({ code: W, record: 0, data: rec(1), file: 'Z.Z', user: 3 }),
      ex({ code: W, record: 0, data: rec(1), file: 'A.A', user: null }),
      ex({ code: null, record: 0, data: rec(1), file: 'N.N' }),
      ex({ code: W, record: 0, data: rec(1), file: null }),
      ex({ code: W, record: 0, data: rec(1), file: 'W?.B' }),
    ]);
    expect(files.map((f) => [f.key, f.user])).toEqual([
      ['0:A.A', null],
      ['3:Z.Z', 3],
    ]);
  });

  it('starts a file only from calls that name its contents, size or locks, not from a close or a delete', () => {
    expect(recoverFiles([ex({ code: BDOS.CLOSE_FILE }), ex({ code: BDOS.DELETE_FILE }), ex({ code: BDOS.RENAME_FILE })])).toEqual([]);
    const later = one([ex({ code: W, record: 0, data: rec(1) }), ex({ code: BDOS.CLOSE_FILE }), ex({ code: BDOS.DELETE_FILE })]);
    expect(later.exchanges).toHaveLength(3);
  });

  it('places no record without a record number, without record data, or with data of another size', () => {
    const f = one([
      ex({ code: W, record: null, data: rec(1) }),
      ex({ code: W, record: 1, data: null }),
      ex({ code: R, record: 2, data: rec(1, 64) }),
      ex({ code: R, record: 3, data: rec(3) }),
    ]);
    expect(f.coverage).toEqual(['missing', 'missing', 'missing', 'seen']);
    expect(f.stations).toEqual([0x21]);
  });

  it('ends a file at a sequential read answered 1, not at a random read answered 1 or a sequential read answered 2', () => {
    expect(one([ex({ code: R, record: 0, data: rec(1) }), ex({ code: R, record: 6, status: 1 })])).toMatchObject({ recordCount: 1, endKnown: false, sizeSource: 'records-seen' });
    expect(one([ex({ code: R, record: 0, data: rec(1) }), ex({ code: BDOS.READ_SEQUENTIAL, record: 6, status: 2 })])).toMatchObject({ recordCount: 1, endKnown: false });
    expect(one([ex({ code: R, record: 0, data: rec(1) }), ex({ code: BDOS.READ_SEQUENTIAL, record: 6, status: 1 })])).toMatchObject({ recordCount: 6, endKnown: true, sizeSource: 'end-of-file' });
  });

  it('keeps a re-read with the same contents as seen and one with other contents as a conflict, conflicts by record', () => {
    const f = one([
      ex({ code: R, record: 5, data: rec(5), station: 0x23 }),
      ex({ code: R, record: 2, data: rec(2), station: 0x21 }),
      ex({ code: R, record: 5, data: rec(9), station: 0x22 }),
      ex({ code: R, record: 2, data: rec(8), station: 0x22 }),
      ex({ code: R, record: 2, data: rec(2), station: 0x21 }),
    ]);
    expect(f.coverage[5]).toBe('conflict');
    expect(f.conflicts.map((c) => [c.record, c.requests.length])).toEqual([
      [2, 2],
      [5, 2],
    ]);
    expect(f.stations).toEqual([0x21, 0x22, 0x23]);
    const same = one([ex({ code: R, record: 0, data: rec(4) }), ex({ code: R, record: 0, data: rec(4) })]);
    expect(same.coverage).toEqual(['seen']);
  });

  it('makes an empty file: end unknown until closed, known at 0 records once closed', () => {
    const make = ex({ code: BDOS.MAKE_FILE });
    expect(one([make])).toMatchObject({ recordCount: 0, endKnown: false, sizeSource: 'written', sizeFrom: make.request });
    expect(one([make, ex({ code: BDOS.CLOSE_FILE })])).toMatchObject({ recordCount: 0, endKnown: true });
    // a make the server refused changes nothing
    expect(one([ex({ code: W, record: 1, data: rec(1) }), ex({ code: BDOS.MAKE_FILE, status: 0xff }), ex({ code: BDOS.CLOSE_FILE })])).toMatchObject({ recordCount: 2, endKnown: false });
  });

  it('forgets the records of the file a make replaced', () => {
    const f = one([ex({ code: R, record: 3, data: rec(3) }), ex({ code: BDOS.MAKE_FILE }), ex({ code: W, record: 0, data: rec(7) }), ex({ code: BDOS.CLOSE_FILE })]);
    expect(f).toMatchObject({ recordCount: 1, endKnown: true });
    expect(f.bytes).toEqual(rec(7));
  });

  it('leaves the end unknown after a write past the size that was never answered, but not after an unanswered read or a write inside the file', () => {
    const made = () => [ex({ code: BDOS.MAKE_FILE }), ex({ code: W, record: 0, data: rec(1) }), ex({ code: W, record: 1, data: rec(1) })];
    expect(one([...made(), ex({ code: W, record: 2, data: rec(1), status: null }), ex({ code: BDOS.CLOSE_FILE })])).toMatchObject({ recordCount: 2, endKnown: false });
    expect(one([...made(), ex({ code: R, record: 9, status: null }), ex({ code: BDOS.CLOSE_FILE })])).toMatchObject({ recordCount: 2, endKnown: true });
    expect(one([...made(), ex({ code: W, record: 1, data: rec(1), status: null }), ex({ code: BDOS.CLOSE_FILE })])).toMatchObject({ recordCount: 2, endKnown: true });
    // answered, but its status was cut off: not a write that may or may not have happened
    expect(one([...made(), ex({ code: W, record: 2, data: rec(1), status: null, outcome: 'answered', answer: {} }), ex({ code: BDOS.CLOSE_FILE })])).toMatchObject({ endKnown: true });
  });

  it('sizes by an open answer’s record count even without its extent, keeps a larger known size over a full extent, and ignores an open without rc', () => {
    const open = (answer: Partial<DecodedCall>, status = 0) => ex({ code: BDOS.OPEN_FILE, status, answer });
    expect(one([open({ recordCount: 9 })])).toMatchObject({ recordCount: 9, endKnown: true, sizeSource: 'open' });
    expect(one([open({ recordCount: 9, extent: 1 })])).toMatchObject({ recordCount: 128 + 9 });
    expect(one([ex({ code: BDOS.COMPUTE_FILE_SIZE, answer: { fileSize: 300 } }), open({ recordCount: 128 })])).toMatchObject({ recordCount: 300, endKnown: true, sizeSource: 'compute-file-size' });
    expect(one([ex({ code: BDOS.COMPUTE_FILE_SIZE, answer: { fileSize: 100 } }), open({ recordCount: 128 })])).toMatchObject({ recordCount: 128, endKnown: false, sizeSource: 'open' });
    expect(one([open({ recordCount: null, extent: 2 }), ex({ code: R, record: 0, data: rec(1) })])).toMatchObject({ recordCount: 1, sizeSource: 'records-seen' });
    expect(one([open({ recordCount: 5 }, 0xff), ex({ code: R, record: 0, data: rec(1) })])).toMatchObject({ recordCount: 1, sizeSource: 'records-seen' });
    expect(one([open({ recordCount: 5 }, 3)])).toMatchObject({ recordCount: 5, sizeSource: 'open' });
    expect(one([open({ recordCount: 5 }, 4), ex({ code: R, record: 0, data: rec(1) })])).toMatchObject({ sizeSource: 'records-seen' });
  });

  it('takes a file size only from a compute-file-size answer with status 0', () => {
    expect(one([ex({ code: BDOS.COMPUTE_FILE_SIZE, status: 0xff, answer: { fileSize: 40 } }), ex({ code: R, record: 0, data: rec(1) })])).toMatchObject({ recordCount: 1 });
    expect(one([ex({ code: R, record: 0, data: rec(1) }), ex({ code: BDOS.CLOSE_FILE, answer: { fileSize: 40 } })])).toMatchObject({ recordCount: 1 });
    expect(one([ex({ code: BDOS.COMPUTE_FILE_SIZE, answer: { fileSize: null } }), ex({ code: R, record: 0, data: rec(1) })])).toMatchObject({ recordCount: 1, sizeSource: 'records-seen' });
  });

  it('does not trust a stated end when records were seen past it before', () => {
    const f = one([ex({ code: R, record: 7, data: rec(1) }), ex({ code: BDOS.READ_SEQUENTIAL, record: 3, status: 1 })]);
    expect(f).toMatchObject({ recordCount: 8, endKnown: false, sizeSource: 'records-seen', sizeFrom: null });
  });

  describe('record locks', () => {
    const L = BDOS.LOCK_RECORD;
    const U = BDOS.UNLOCK_RECORD;
    const conflicts = (list: Exchange[]) => one(list).lockConflicts.map((c) => [c.holder.station, c.requester.station, c.record, c.outcome]);

    it('releases a lock on an unlock answered 0 by its holder only', () => {
      expect(conflicts([ex({ code: L, record: 4 }), ex({ code: U, record: 4, status: 8 }), ex({ code: L, record: 4, station: 0x22 })])).toEqual([[0x21, 0x22, 4, 'granted']]);
      expect(conflicts([ex({ code: L, record: 4 }), ex({ code: U, record: 4, station: 0x22 }), ex({ code: L, record: 4, station: 0x22, status: 8 })])).toEqual([[0x21, 0x22, 4, 'refused']]);
      expect(conflicts([ex({ code: L, record: 4 }), ex({ code: U, record: null }), ex({ code: U, record: 4 }), ex({ code: L, record: 4, station: 0x22 })])).toEqual([]);
    });

    it('releases a station’s locks when it closes the file, not when another station does', () => {
      expect(conflicts([ex({ code: L, record: 4 }), ex({ code: BDOS.CLOSE_FILE }), ex({ code: L, record: 4, station: 0x22 })])).toEqual([]);
      expect(conflicts([ex({ code: L, record: 4 }), ex({ code: BDOS.CLOSE_FILE, station: 0x22 }), ex({ code: L, record: 4, station: 0x22 })])).toEqual([[0x21, 0x22, 4, 'granted']]);
      expect(conflicts([ex({ code: L, record: 4 }), ex({ code: BDOS.CLOSE_FILE, status: 0xff }), ex({ code: L, record: 4, station: 0x22 })])).toEqual([[0x21, 0x22, 4, 'granted']]);
    });

    it('holds a lock only when it was granted, once per station, and ignores a lock without a record number', () => {
      // 0x22 was refused, so 0x23 meets only 0x21's lock
      expect(conflicts([ex({ code: L, record: 4 }), ex({ code: L, record: 4, station: 0x22, status: 8 }), ex({ code: L, record: 4, station: 0x23, status: 8 })])).toEqual([
        [0x21, 0x22, 4, 'refused'],
        [0x21, 0x23, 4, 'refused'],
      ]);
      // 0x21 locking again is no conflict and does not hold it twice
      expect(conflicts([ex({ code: L, record: 4 }), ex({ code: L, record: 4 }), ex({ code: L, record: 4, station: 0x22, status: 8 })])).toEqual([[0x21, 0x22, 4, 'refused']]);
      expect(conflicts([ex({ code: L, record: null }), ex({ code: L, record: null, station: 0x22 })])).toEqual([]);
    });
  });
});

describe('directory listings from hand-made exchanges', () => {
  const entryRecord = (names: string[]) => {
    const r = new Uint8Array(128).fill(0xe5);
    names.forEach((n, i) => r.set(new Uint8Array([0, ...cpmName(n), 0, 0, 0, i + 1]), i * 32));
    return r;
  };
  const search = (t: number, code: number | null, status: number | null, data: Uint8Array | null): Exchange =>
    ({ station: 0x21, request: { link: 'up', seq: t }, callCode: code, status, firstSample: t, responseCall: status === null ? null : { recordData: data } }) as unknown as Exchange;

  it('lists entries in time order, only from search answers 0–3 with a record', () => {
    const r = entryRecord(['ONE.A', 'TWO.B']);
    const list = directoryListing([
      search(30, BDOS.SEARCH_NEXT, 1, r),
      search(10, BDOS.SEARCH_FIRST, 0, r),
      search(20, BDOS.READ_RANDOM, 0, r),
      search(25, null, 0, r),
      search(40, BDOS.SEARCH_NEXT, 0xff, r),
      search(50, BDOS.SEARCH_NEXT, null, null),
      search(60, BDOS.SEARCH_NEXT, 0, null),
    ]);
    expect(list.map((e) => [e.request.seq, e.name, e.rc])).toEqual([
      [10, 'ONE.A', 1],
      [30, 'TWO.B', 2],
    ]);
  });
});

describe('missing record ranges', () => {
  it('gives each run of missing records as [first, last], runs of one, at the start and at the end included', () => {
    expect(missingRanges([])).toEqual([]);
    expect(missingRanges(['seen', 'conflict'])).toEqual([]);
    expect(missingRanges(['missing', 'missing', 'seen', 'missing', 'conflict', 'missing', 'missing', 'missing'])).toEqual([
      [0, 1],
      [3, 3],
      [5, 7],
    ]);
    expect(missingRanges(['seen', 'missing'])).toEqual([[1, 1]]);
  });
});
