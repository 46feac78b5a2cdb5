import { describe, expect, it } from 'vitest';
import { applyFieldMap, attributeList, decodeCpmName, decodeFrameCall, BDOS, CPM_ENVELOPE, parseFieldMap } from '../../shared/decoder/calls';
import { checkFrame } from '../../shared/decoder';
import { bootRequestExtra, cpmName, requestInfo, responseInfo, sequentialPosition, encodeLineBits, seededRng } from '../../shared/decoder/encode';

describe('CP/M file names', () => {
  // CP/M 2.2 manual 5.2, Table 5-2: f1–f8 and t1–t3 upper-case ASCII; t1' = 1 read-only file,
  // t2' = 1 SYS file. CP/M 3 Programmer's Guide section 2.3: f1'–f8' are attribute bits, t3' =
  // 1 archived. (Space padding: common practice of the CCP's file name parsing, from memory.)
  it('masks the high bits for the name and reports them as attributes', () => {
    const raw = cpmName('PARISH.DAT', { readOnly: true, system: true, f1: true });
    expect(raw[0]).toBe('P'.charCodeAt(0) | 0x80);
    expect(raw[8]).toBe('D'.charCodeAt(0) | 0x80);
    expect(raw[9]).toBe('A'.charCodeAt(0) | 0x80);
    const d = decodeCpmName(raw);
    expect(d.text).toBe('PARISH.DAT');
    expect(d.attributes).toEqual({ f1: true, f2: false, f3: false, f4: false, readOnly: true, system: true, archive: false });
  });

  it('drops the padding of short names and types', () => {
    expect(decodeCpmName(cpmName('A.B')).text).toBe('A.B');
    expect(decodeCpmName(cpmName('NOTYPE')).text).toBe('NOTYPE');
  });
});

describe('applying the CP/M call envelope', () => {
  it('decodes an open request: call name, tag, user, file name and its attributes', () => {
    const info = requestInfo(BDOS.OPEN_FILE, 0x41, 3, { fcb: { drive: 2, name: 'HYMNS.TXT', attributes: { archive: true } } });
    const c = applyFieldMap(CPM_ENVELOPE, info, 'request');
    expect(c).toMatchObject({ layout: 'open-file-request', callCode: 15, callName: 'open file', tag: 0x41, user: 3, fileName: 'HYMNS.TXT', truncated: false, unexplained: 0 });
    expect(c.attributes?.archive).toBe(true);
    expect(c.fields.find((f) => f.id === 'dr')!.display).toBe('2 (B)');
  });

  it('reads the call code of a response with bit 7 cleared and names its status for that call', () => {
    const c = applyFieldMap(CPM_ENVELOPE, responseInfo(BDOS.OPEN_FILE, 9, 0xff, { fcb: { name: 'LOST.DAT' } }), 'response');
    expect(c).toMatchObject({ callCode: 15, callName: 'open file', status: 0xff, statusMeaning: 'file not found', fileName: 'LOST.DAT' });
    const eof = applyFieldMap(CPM_ENVELOPE, responseInfo(BDOS.READ_SEQUENTIAL, 9, 1, { fcb: { name: 'A.B' }, record: new Uint8Array(128) }), 'response');
    expect(eof.statusMeaning).toBe('end of file');
  });

  // CP/M 2.2 manual 5.2: files are divided into 16K logical extents (128 records of 128 bytes),
  // ex 0–31 (Table 5-2); s2 counting modules of 32 extents is from memory of the 2.2 BDOS listing.
  // So the record of a sequential call is (s2 * 32 + ex) * 128 + cr.
  it.each([0, 5, 127, 128, 133, 4095, 4096, 4096 + 129])('gives record %i for a sequential read whose FCB holds that position', (record) => {
    const pos = sequentialPosition(record);
    const c = applyFieldMap(CPM_ENVELOPE, requestInfo(BDOS.READ_SEQUENTIAL, 1, 0, { fcb: { name: 'BIG.DAT', ...pos } }), 'request');
    expect(c.recordNumber).toBe(record);
  });

  // The BDOS sets bit 7 of s2 on open and make and masks it off itself (from memory of the CP/M
  // 2.2 BDOS listing); the module number is the low four bits (CP/M 2.2 manual 5.2: at most
  // 65 536 records, extents 0–31 of 128 records, so 16 modules).
  it.each([0, 127, 128, 4096, 4096 * 15 + 200])('places sequential record %i by the module bits of s2 when the BDOS’s flag is set in bit 7', (record) => {
    const pos = sequentialPosition(record);
    const c = applyFieldMap(CPM_ENVELOPE, requestInfo(BDOS.READ_SEQUENTIAL, 1, 0, { fcb: { name: 'BIG.DAT', ...pos, s2: pos.s2 | 0x80 } }), 'request');
    expect(c.fields.find((f) => f.id === 's2')!.value).toBe(pos.s2 | 0x80);
    expect(c.recordNumber).toBe(record);
    expect(c.module).toBe(pos.s2);
  });

  // CP/M 2.2 manual 5.2, Table 5-2: r0, r1 a 16-bit value with r0 the low byte, overflow to r2.
  it('reads the random record number from r0–r2 with r0 the low byte', () => {
    const info = requestInfo(BDOS.READ_RANDOM, 1, 0, { fcb: { name: 'BAPTISMS.DAT', random: 0x01_02_03 } });
    expect(info.subarray(3 + 33, 3 + 36)).toEqual(new Uint8Array([0x03, 0x02, 0x01]));
    expect(applyFieldMap(CPM_ENVELOPE, info, 'request').recordNumber).toBe(0x010203);
  });

  // Our envelope (product spec): a read answer carries its record only when the status says a
  // record follows; CP/M 2.2 manual 5.2, function 20: nonzero when no data exist at the next record.
  it('reads an end-of-file answer without a record as complete, not truncated', () => {
    const eof = applyFieldMap(CPM_ENVELOPE, responseInfo(BDOS.READ_SEQUENTIAL, 9, 1, { fcb: { name: 'A.B' } }), 'response');
    expect(eof).toMatchObject({ status: 1, statusMeaning: 'end of file', truncated: false, unexplained: 0, recordData: null, problems: [] });
    expect(eof.fields.find((f) => f.id === 'record')).toMatchObject({ absent: true, truncated: false, available: 0, length: 0, display: '(not sent when status is 1)' });
    for (const [code, extra] of [
      [BDOS.READ_RANDOM, { fcb: { name: 'A.B', random: 9 } }],
      [BDOS.SEARCH_FIRST, { fcb: { name: '????????.???' } }],
      [BDOS.SEARCH_NEXT, {}],
      [BDOS.BOOT_LOAD, { extra: new Uint8Array([9, 0]) }],
    ] as const) {
      const status = code === BDOS.READ_RANDOM ? 1 : code === BDOS.BOOT_LOAD ? 1 : 0xff;
      const c = applyFieldMap(CPM_ENVELOPE, responseInfo(code, 2, status, extra), 'response');
      expect(c, `call ${code}`).toMatchObject({ callCode: code, status, truncated: false, problems: [], unexplained: 0, recordData: null });
    }
  });

  it('still marks a successful read answer that ends early as truncated', () => {
    const ok = responseInfo(BDOS.READ_SEQUENTIAL, 9, 0, { fcb: { name: 'A.B' } });
    const c = applyFieldMap(CPM_ENVELOPE, ok, 'response');
    expect(c.truncated).toBe(true);
    expect(c.fields.find((f) => f.id === 'record')).toMatchObject({ absent: false, truncated: true, available: 0, length: 128 });
  });

  it('reads the position and record count of an open answer and the size of a compute file size answer', () => {
    const open = applyFieldMap(CPM_ENVELOPE, responseInfo(BDOS.OPEN_FILE, 3, 0, { fcb: { name: 'A.B', ex: 2, s2: 0x81, rc: 0x45 } }), 'response');
    expect(open).toMatchObject({ extent: 2, module: 1, recordCount: 0x45, fileSize: null });
    const size = applyFieldMap(CPM_ENVELOPE, responseInfo(BDOS.COMPUTE_FILE_SIZE, 4, 0, { fcb: { name: 'A.B', random: 0x010000 } }), 'response');
    // CP/M 2.2 manual 5.2, function 35: r2 = 01 means the maximum record count 65 536
    expect(size).toMatchObject({ fileSize: 65536, recordNumber: null });
  });

  it('gives the record data of a write request and of a read response', () => {
    const rec = Uint8Array.from({ length: 128 }, (_, i) => i);
    const w = applyFieldMap(CPM_ENVELOPE, requestInfo(BDOS.WRITE_RANDOM, 1, 0, { fcb: { name: 'X.Y', random: 4 }, record: rec }), 'request');
    expect(w.recordData).toEqual(rec);
    const r = applyFieldMap(CPM_ENVELOPE, responseInfo(BDOS.READ_RANDOM, 1, 0, { fcb: { name: 'X.Y' }, record: rec }), 'response');
    expect(r.recordData).toEqual(rec);
  });

  it('decodes a boot load request: image name as the file name, record number', () => {
    const c = applyFieldMap(CPM_ENVELOPE, requestInfo(BDOS.BOOT_LOAD, 1, 0, { extra: bootRequestExtra('WRENBOOT.SYS', 6) }), 'request');
    expect(c).toMatchObject({ callName: 'boot load', fileName: 'WRENBOOT.SYS', recordNumber: 6, truncated: false });
  });

  it('shows list output text', () => {
    const c = applyFieldMap(CPM_ENVELOPE, requestInfo(BDOS.LIST_OUTPUT, 1, 0, { text: 'Hymn 23\r\n' }), 'request');
    expect(c.callName).toBe('list output');
    expect(c.fields.find((f) => f.id === 'text')!.text).toBe('Hymn 23..');
  });

  it('uses the fallback layout for a call the map does not name', () => {
    const c = applyFieldMap(CPM_ENVELOPE, new Uint8Array([0x63, 1, 0, 9, 9]), 'request');
    expect(c).toMatchObject({ layout: 'other-request', callCode: 0x63, callName: null, tag: 1 });
  });
});

describe('frames shorter than the map says', () => {
  it('decodes the fields that are there and marks the rest as truncated', () => {
    const full = requestInfo(BDOS.READ_RANDOM, 5, 0, { fcb: { name: 'BAPTISMS.DAT', random: 77 } });
    const cut = full.subarray(0, 3 + 14); // ends inside the FCB, after s1
    const c = applyFieldMap(CPM_ENVELOPE, cut, 'request');
    expect(c.truncated).toBe(true);
    expect(c).toMatchObject({ callName: 'read random', tag: 5, fileName: 'BAPTISMS.DAT', recordNumber: null });
    const state = Object.fromEntries(c.fields.map((f) => [f.id, [f.truncated, f.available]]));
    expect(state).toEqual({ call: [false, 1], tag: [false, 1], user: [false, 1], dr: [false, 1], name: [false, 11], ex: [false, 1], s1: [false, 1], s2: [true, 0], rc: [true, 0], d: [true, 0], cr: [true, 0], r: [true, 0] });
    expect(c.problems[0]).toMatch(/ends inside field “s2”/);
  });

  it('keeps the octets of a half-present record and gives no record data', () => {
    const full = responseInfo(BDOS.READ_SEQUENTIAL, 5, 0, { fcb: { name: 'A.B' }, record: new Uint8Array(128).fill(7) });
    const c = applyFieldMap(CPM_ENVELOPE, full.subarray(0, full.length - 20), 'response');
    const rec = c.fields.find((f) => f.id === 'record')!;
    expect([rec.truncated, rec.available, rec.length]).toEqual([true, 108, 128]);
    expect(c.recordData).toBeNull();
  });

  it('marks fields placed after a missing field, or sized by one, as truncated too', () => {
    const map = parseFieldMap({
      name: 'counted',
      version: 1,
      layouts: [
        {
          id: 'all',
          fields: [
            { id: 'n', type: 'u16le' },
            { id: 'data', type: 'bytes', length: { field: 'n' } },
            { id: 'tail', type: 'u8', offset: { after: 'data' } },
          ],
        },
      ],
    });
    const ok = applyFieldMap(map, new Uint8Array([2, 0, 9, 9, 4]), 'request');
    expect(ok.fields.map((f) => [f.id, f.offset, f.length, f.truncated])).toEqual([
      ['n', 0, 2, false],
      ['data', 2, 2, false],
      ['tail', 4, 1, false],
    ]);
    const short = applyFieldMap(map, new Uint8Array([1]), 'request');
    expect(short.fields.map((f) => f.truncated)).toEqual([true, true, true]);
    // the octet that is there belongs to the first field: nothing unexplained
    expect(short.unexplained).toBe(0);
  });

  it('never throws on random information fields; every field holds exactly the octets that are there', () => {
    const rng = seededRng(11);
    const seen = { truncated: 0, whole: 0 };
    for (let k = 0; k < 2000; k++) {
      const info = Uint8Array.from({ length: Math.floor(rng() * 200) }, () => Math.floor(rng() * 256));
      const c = applyFieldMap(CPM_ENVELOPE, info, rng() < 0.5 ? 'request' : 'response');
      // the envelope's call code is octet 0 without the response bit, its tag octet 1 (our envelope, cpm-envelope.ts)
      expect(c.callCode).toBe(info.length > 0 ? info[0] & 0x7f : null);
      if (c.layout !== null) expect(c.tag).toBe(info.length > 1 ? info[1] : null);
      let end = 0;
      for (const f of c.fields) {
        // the envelope places every field right after the one before, so each starts where the last ended
        expect([f.id, f.offset]).toEqual([f.id, end]);
        end = f.offset + f.length;
        expect(f.available).toBe(Math.max(0, Math.min(f.length, info.length - f.offset)));
        expect(f.truncated).toBe(f.available < f.length);
        if (f.value !== null && f.type === 'u8') expect(f.value).toBe(info[f.offset]);
      }
      expect(c.truncated).toBe(c.fields.some((f) => f.truncated));
      seen[c.truncated ? 'truncated' : 'whole']++;
    }
    expect(seen.truncated).toBeGreaterThan(100);
    expect(seen.whole).toBeGreaterThan(100);
  });
});

describe('decodeFrameCall', () => {
  const frame = (bytes: number[], faults?: { wrongFcs?: boolean }) => {
    const enc = encodeLineBits([{ kind: 'frame', bytes: new Uint8Array(bytes), faults }]);
    const f = enc.frames[0];
    return checkFrame({ link: 'tx', seq: 0, firstSample: 0, lastSample: 1, bytes: f.wire, bitLength: f.bitLength, stuffed: [], status: 'ok' });
  };
  const info = Array.from(requestInfo(BDOS.CLOSE_FILE, 2, 0, { fcb: { name: 'A.B' } }));

  it('decodes the information field of a good I frame (after address and control, before the FCS)', () => {
    const c = decodeFrameCall(CPM_ENVELOPE, frame([0x21, 0x10, ...info]), 'request');
    expect(c).toMatchObject({ callName: 'close file', tag: 2, fileName: 'A.B', unexplained: 0 });
  });

  it('decodes the information field of a UI frame too', () => {
    expect(decodeFrameCall(CPM_ENVELOPE, frame([0x21, 0x13, ...info]), 'request')?.callName).toBe('close file');
  });

  it('gives no call for a damaged frame, an S or U frame (even one carrying octets) or an empty I frame', () => {
    expect(decodeFrameCall(CPM_ENVELOPE, frame([0x21, 0x10, ...info], { wrongFcs: true }), 'request')).toBeNull();
    expect(decodeFrameCall(CPM_ENVELOPE, frame([0x21, 0x11]), 'request')).toBeNull();
    expect(decodeFrameCall(CPM_ENVELOPE, frame([0x21, 0x11, ...info]), 'request')).toBeNull();
    expect(decodeFrameCall(CPM_ENVELOPE, frame([0x21, 0x63, ...info]), 'request')).toBeNull();
    expect(decodeFrameCall(CPM_ENVELOPE, frame([0x21, 0x10]), 'request')).toBeNull();
  });

  it('reads a bad-FCS I frame only when asked to, for guessing its exchange', () => {
    const bad = frame([0x21, 0x10, ...info], { wrongFcs: true });
    expect(decodeFrameCall(CPM_ENVELOPE, bad, 'request', true)).toMatchObject({ callName: 'close file', tag: 2 });
    expect(decodeFrameCall(CPM_ENVELOPE, frame([0x21, 0x11, ...info], { wrongFcs: true }), 'request', true)).toBeNull();
    // an aborted frame is not readable either way
    const aborted = { ...frame([0x21, 0x10, ...info]), status: 'abort' as const };
    expect(decodeFrameCall(CPM_ENVELOPE, aborted, 'request', true)).toBeNull();
  });
});

describe('bit fields and counted fields in a user map', () => {
  const map = parseFieldMap({
    name: 'station status',
    version: 2,
    layouts: [
      {
        id: 'status',
        fields: [
          {
            id: 'flags',
            type: 'bits',
            bits: [
              { name: 'ready', shift: 0, values: { '0': 'busy', '1': 'ready' } },
              { name: 'drive', shift: 4, width: 4 },
            ],
          },
          { id: 'count', type: 'u16be' },
          { id: 'label', type: 'ascii', length: { field: 'count', add: -1 } },
        ],
      },
    ],
  });

  it('names each bit field and sizes a field from another one', () => {
    const c = applyFieldMap(map, new Uint8Array([0x31, 0x00, 0x04, 0x41, 0x42, 0x43, 0x44]), 'response');
    expect(c.fields[0].bits).toEqual([
      { name: 'ready', value: 1, valueName: 'ready' },
      { name: 'drive', value: 3, valueName: null },
    ]);
    expect(c.fields[0].display).toBe('ready=ready drive=3');
    expect(c.fields[1].value).toBe(4);
    expect(c.fields[2]).toMatchObject({ offset: 3, length: 3, text: 'ABC', truncated: false });
    expect(c.unexplained).toBe(1);
  });
});

describe('how each field type reads and shows', () => {
  const map = parseFieldMap({
    name: 'all types',
    version: 1,
    callCode: { offset: 0, type: 'u16be', responseMask: 0x8000 },
    calls: [{ code: 0x0102, name: 'probe' }],
    layouts: [
      {
        id: 'probe',
        when: { calls: [0x0102] },
        fields: [
          { id: 'code', type: 'u16be', role: 'call' },
          { id: 'le', type: 'u16le', values: { '0x0201': 'two-one' } },
          { id: 'wide', type: 'u24le' },
          { id: 'flags', type: 'bits', length: 2, bits: [{ name: 'lo', shift: 0, width: 4 }, { name: 'hi', shift: 12, width: 4, values: { '15': 'all' } }] },
          { id: 'who', type: 'cpm-name', role: 'file-name' },
          { id: 'label', type: 'ascii', length: 3 },
          { id: 'blob', type: 'bytes', length: 'rest' },
        ],
      },
    ],
  });
  const info = new Uint8Array([
    0x81, 0x02, // code 0x0102 with the response bit
    0x01, 0x02, // le 0x0201
    0x01, 0x02, 0x03, // wide 0x030201
    0x34, 0xf2, // flags 0xF234
    ...cpmName('AB.C', { readOnly: true, f2: true }),
    0x41, 0x0a, 0xc2, // "A", newline, "B" with its high bit
    ...Array.from({ length: 17 }, (_, i) => i),
  ]);

  it('reads big- and little-endian numbers, bit fields across octets, names, text and bytes', () => {
    const c = applyFieldMap(map, info, 'response');
    expect(c).toMatchObject({ layout: 'probe', callCode: 0x0102, callName: 'probe', fileName: 'AB.C', truncated: false, unexplained: 0, problems: [] });
    const f = Object.fromEntries(c.fields.map((x) => [x.id, x]));
    expect(f.code).toMatchObject({ value: 0x8102, display: String(0x8102) });
    expect(f.le).toMatchObject({ value: 0x0201, valueName: 'two-one', display: '513 (two-one)' });
    expect(f.wide).toMatchObject({ value: 0x030201, offset: 4, length: 3 });
    expect(f.flags).toMatchObject({ value: 0xf234, display: 'lo=4 hi=all' });
    expect(f.flags.bits).toEqual([
      { name: 'lo', value: 4, valueName: null },
      { name: 'hi', value: 15, valueName: 'all' },
    ]);
    expect(f.who).toMatchObject({ text: 'AB.C', display: "AB.C [read-only, f2']", offset: 9, length: 11 });
    expect(f.label).toMatchObject({ text: 'A.B', display: '"A.B"' });
    expect(f.blob).toMatchObject({ length: 17, display: '00 01 02 03 04 05 06 07 08 09 0A 0B 0C 0D 0E 0F … (17 octets)' });
  });

  it('shows how much of a field a short frame holds', () => {
    const c = applyFieldMap(map, info.subarray(0, 8), 'response');
    const f = Object.fromEntries(c.fields.map((x) => [x.id, x]));
    expect(f.flags).toMatchObject({ truncated: true, available: 1, value: null, display: '(truncated: 1 of 2 octets)' });
    expect(f.who).toMatchObject({ truncated: true, available: 0, offset: 9, text: '' });
    expect(c.fileName).toBeNull();
    expect(c.problems).toEqual(['the frame ends inside field “flags”: 8 octets, the layout needs more']);
  });

  it('reads no call code from a frame shorter than the code, and says when no layout fits', () => {
    const c = applyFieldMap(map, new Uint8Array([0x01]), 'request');
    expect(c).toMatchObject({ callCode: null, layout: null, callName: null, unexplained: 1, fields: [] });
    expect(c.problems).toEqual(['no layout of “all types” fits a request']);
    const other = applyFieldMap(map, new Uint8Array([0x00, 0x07, 1, 2]), 'request');
    expect(other).toMatchObject({ callCode: 7, layout: null, unexplained: 4 });
    expect(other.problems).toEqual(['no layout of “all types” fits a request with call code 7']);
  });

  it('picks layouts by direction, then by call code, first match first', () => {
    const m = parseFieldMap({
      name: 'dir',
      version: 1,
      callCode: { offset: 0, type: 'u8' },
      layouts: [
        { id: 'req-5', when: { calls: [5], direction: 'request' }, fields: [{ id: 'a', type: 'u8', role: 'call' }] },
        { id: 'resp', when: { direction: 'response' }, fields: [{ id: 'a', type: 'u8', role: 'call' }] },
        { id: 'any', fields: [{ id: 'a', type: 'u8' }] },
      ],
    });
    expect(applyFieldMap(m, new Uint8Array([5]), 'request').layout).toBe('req-5');
    expect(applyFieldMap(m, new Uint8Array([5]), 'response').layout).toBe('resp');
    expect(applyFieldMap(m, new Uint8Array([6]), 'request').layout).toBe('any');
    expect(applyFieldMap(m, new Uint8Array([]), 'request')).toMatchObject({ layout: 'any', callCode: null, truncated: true });
  });

  it('lists attribute flags in a fixed order', () => {
    expect(attributeList({ f1: true, f2: false, f3: true, f4: true, readOnly: true, system: true, archive: true })).toEqual(['read-only', 'system', 'archive', "f1'", "f3'", "f4'"]);
    expect(attributeList({ f1: false, f2: false, f3: false, f4: false, readOnly: false, system: false, archive: false })).toEqual([]);
  });
});

describe('placing fields and reading roles', () => {
  it('places a field at a numeric offset past a gap, and after a field that is not the previous one', () => {
    const m = parseFieldMap({
      name: 'gaps',
      version: 1,
      layouts: [
        {
          id: 'all',
          fields: [
            { id: 'a', type: 'u8', name: 'first octet', meaning: 'what a means', role: 'tag' },
            { id: 'b', type: 'u8', offset: 5 },
            { id: 'c', type: 'u8', offset: { after: 'a' } },
            { id: 'd', type: 'u16le' },
          ],
        },
      ],
    });
    const c = applyFieldMap(m, new Uint8Array([1, 2, 3, 4, 5, 6]), 'request');
    expect(c.fields.map((f) => [f.id, f.offset, f.value])).toEqual([
      ['a', 0, 1],
      ['b', 5, 6],
      ['c', 1, 2],
      ['d', 2, 3 | (4 << 8)],
    ]);
    expect(c.fields[0]).toMatchObject({ name: 'first octet', meaning: 'what a means', role: 'tag' });
    expect(c.fields[1]).toMatchObject({ name: 'b', meaning: null, role: null });
    // the furthest field ends the explained part: nothing is left over
    expect(c.unexplained).toBe(0);
    expect(c.tag).toBe(1);
  });

  it('reads the call code from the call field when the map does not say where it sits', () => {
    const m = parseFieldMap({
      name: 'no callCode',
      version: 1,
      calls: [{ code: 9, name: 'nine' }],
      layouts: [{ id: 'all', fields: [{ id: 'x', type: 'u8' }, { id: 'code', type: 'u8', role: 'call' }] }],
    });
    expect(applyFieldMap(m, new Uint8Array([0, 9]), 'request')).toMatchObject({ callCode: 9, callName: 'nine' });
  });

  it('names the call code of a frame no layout fits', () => {
    const m = parseFieldMap({
      name: 'requests only',
      version: 1,
      callCode: { offset: 0, type: 'u8' },
      calls: [{ code: 7, name: 'seven' }],
      layouts: [{ id: 'req', when: { direction: 'request' }, fields: [{ id: 'code', type: 'u8', role: 'call' }] }],
    });
    expect(applyFieldMap(m, new Uint8Array([7]), 'response')).toMatchObject({ layout: null, callCode: 7, callName: 'seven' });
  });

  it('gives no record number when the sequential position is cut short, and no module when the call has none', () => {
    const full = requestInfo(BDOS.READ_SEQUENTIAL, 1, 0, { fcb: { name: 'A.B', ex: 2, cr: 5 } });
    expect(applyFieldMap(CPM_ENVELOPE, full, 'request')).toMatchObject({ recordNumber: 2 * 128 + 5, extent: 2, module: 0 });
    const cut = applyFieldMap(CPM_ENVELOPE, full.subarray(0, 3 + 13), 'request'); // ex there, cr not
    expect(cut).toMatchObject({ extent: 2, recordNumber: null, module: null });
    const random = applyFieldMap(CPM_ENVELOPE, requestInfo(BDOS.READ_RANDOM, 1, 0, { fcb: { name: 'A.B', random: 3 } }), 'request');
    expect(random).toMatchObject({ recordNumber: 3, extent: null, module: null, recordCount: null });
  });

  it('leaves a status-dependent field truncated, not absent, when the status itself is cut off', () => {
    const c = applyFieldMap(CPM_ENVELOPE, new Uint8Array([BDOS.READ_SEQUENTIAL | 0x80, 4]), 'response');
    expect(c.status).toBeNull();
    expect(c.fields.find((f) => f.id === 'record')).toMatchObject({ absent: false, truncated: true });
  });

  it('gives no record data for an empty record field at the end of the frame', () => {
    const m = parseFieldMap({ name: 'rest', version: 1, layouts: [{ id: 'all', fields: [{ id: 'n', type: 'u8' }, { id: 'data', type: 'bytes', length: 'rest', role: 'record-data' }] }] });
    expect(applyFieldMap(m, new Uint8Array([1]), 'request').recordData).toBeNull();
    expect(applyFieldMap(m, new Uint8Array([1, 2]), 'request').recordData).toEqual(new Uint8Array([2]));
  });

  it('shows a name without attributes plainly, 16 octets without an ellipsis, DEL as a dot and what a truncated field holds', () => {
    const m = parseFieldMap({
      name: 'shows',
      version: 1,
      layouts: [
        {
          id: 'all',
          fields: [
            { id: 'who', type: 'cpm-name' },
            { id: 'sixteen', type: 'bytes', length: 16 },
            { id: 'txt', type: 'ascii', length: 4 },
            { id: 'n', type: 'u8' },
            { id: 'sized', type: 'bytes', length: { field: 'n' } },
          ],
        },
      ],
    });
    const info = new Uint8Array([...cpmName('HYMNS.TXT'), ...Array.from({ length: 16 }, (_, i) => 0xf0 + (i % 16)), 0x41, 0x7f]);
    const c = applyFieldMap(m, info, 'request');
    const f = Object.fromEntries(c.fields.map((x) => [x.id, x]));
    expect(f.who.display).toBe('HYMNS.TXT');
    expect(f.sixteen.display).toBe('F0 F1 F2 F3 F4 F5 F6 F7 F8 F9 FA FB FC FD FE FF');
    expect(f.txt).toMatchObject({ text: 'A.', display: '"A." (truncated: 2 of 4 octets)' });
    expect(f.sized).toMatchObject({ truncated: true, length: 0, display: '(truncated: 0 of ? octets)' });
    expect(c.unexplained).toBe(0);
  });
});

// Our field-map rules (shared/decoder/calls/field-map.ts and the comment of apply.ts are their spec).
describe('field-map rules where a slip changes a decoded value', () => {
  it('reads a 24-bit big-endian number with its first octet most significant', () => {
    const m = parseFieldMap({ name: 'be', version: 1, layouts: [{ id: 'a', fields: [{ id: 'n', type: 'u24be', role: 'record-number' }, { id: 'm', type: 'u24le' }] }] });
    const c = applyFieldMap(m, Uint8Array.of(0x01, 0x02, 0x03, 0x01, 0x02, 0x03), 'request');
    expect(c.fields.map((f) => f.value)).toEqual([0x010203, 0x030201]);
    expect(c.recordNumber).toBe(0x010203);
  });

  it('checks a length field against the octets after it, less its lengthAdd, wherever it sits', () => {
    const m = parseFieldMap({
      name: 'counted',
      version: 1,
      layouts: [{ id: 'a', fields: [{ id: 'op', type: 'u8' }, { id: 'len', type: 'u16le', role: 'length', lengthAdd: 2 }, { id: 'body', type: 'bytes', length: 'rest' }] }],
    });
    // three octets follow the length field; with lengthAdd 2 it says 5
    expect(applyFieldMap(m, Uint8Array.of(9, 5, 0, 1, 2, 3), 'request').problems).toEqual([]);
    expect(applyFieldMap(m, Uint8Array.of(9, 4, 0, 1, 2, 3), 'request').problems).toEqual(['the length field “len” says 2 octets follow it, the frame has 3']);
    // without lengthAdd the value is the count itself
    const plain = parseFieldMap({ name: 'plain', version: 1, layouts: [{ id: 'a', fields: [{ id: 'len', type: 'u8', role: 'length' }, { id: 'body', type: 'bytes', length: 'rest' }] }] });
    expect(applyFieldMap(plain, Uint8Array.of(2, 7, 7), 'request').problems).toEqual([]);
    expect(applyFieldMap(plain, Uint8Array.of(3, 7, 7), 'request').problems).toEqual(['the length field “len” says 3 octets follow it, the frame has 2']);
    // a length field cut off says nothing
    expect(applyFieldMap(m, Uint8Array.of(9, 5), 'request').problems).toEqual(['the frame ends inside field “len”: 2 octets, the layout needs more']);
  });

  it('gives a field sized by another one no octets when the count plus its add is below zero', () => {
    const m = parseFieldMap({ name: 'neg', version: 1, layouts: [{ id: 'a', fields: [{ id: 'n', type: 'u8' }, { id: 'label', type: 'ascii', length: { field: 'n', add: -1 } }, { id: 'tail', type: 'u8' }] }] });
    const c = applyFieldMap(m, Uint8Array.of(0, 0x41), 'request');
    expect(c.fields.map((f) => [f.id, f.offset, f.length, f.truncated, f.value ?? f.text])).toEqual([
      ['n', 0, 1, false, 0],
      ['label', 1, 0, false, ''],
      ['tail', 1, 1, false, 0x41],
    ]);
  });

  it('gives a rest field that starts past the end of the frame no octets', () => {
    const m = parseFieldMap({ name: 'rest', version: 1, layouts: [{ id: 'a', fields: [{ id: 'n', type: 'u16le' }, { id: 'data', type: 'bytes', length: 'rest', role: 'record-data' }] }] });
    const c = applyFieldMap(m, Uint8Array.of(1), 'request');
    expect(c.fields.map((f) => [f.id, f.offset, f.length, f.available, f.truncated])).toEqual([
      ['n', 0, 2, 1, true],
      ['data', 2, 0, 0, false],
    ]);
    expect(c.recordData).toBeNull();
  });

  it('moves the fields after one the status leaves out up to where it would have started', () => {
    const m = parseFieldMap({
      name: 'status',
      version: 1,
      layouts: [
        {
          id: 'a',
          fields: [
            { id: 'st', type: 'u8', role: 'status' },
            { id: 'extra', type: 'u16le', onlyIfStatus: [0] },
            { id: 'next', type: 'u8' },
            { id: 'after', type: 'u8', offset: { after: 'extra' } },
          ],
        },
      ],
    });
    const absent = applyFieldMap(m, Uint8Array.of(1, 7), 'response');
    expect(absent.fields.map((f) => [f.id, f.offset, f.length, f.absent, f.value])).toEqual([
      ['st', 0, 1, false, 1],
      ['extra', 1, 0, true, null],
      ['next', 1, 1, false, 7],
      ['after', 1, 1, false, 7],
    ]);
    expect(absent).toMatchObject({ truncated: false, unexplained: 0, status: 1 });
    const present = applyFieldMap(m, Uint8Array.of(0, 0x34, 0x12, 7), 'response');
    expect(present.fields.map((f) => [f.id, f.offset, f.value])).toEqual([
      ['st', 0, 0],
      ['extra', 1, 0x1234],
      ['next', 3, 7],
      ['after', 3, 7],
    ]);
  });

  it('places a left-out field after an unplaced one at the end of the frame', () => {
    const m = parseFieldMap({
      name: 'unplaced',
      version: 1,
      layouts: [
        {
          id: 'a',
          fields: [
            { id: 'st', type: 'u8', role: 'status' },
            { id: 'n', type: 'u8' },
            { id: 'data', type: 'bytes', length: { field: 'n' } },
            { id: 'opt', type: 'u8', onlyIfStatus: [0], offset: { after: 'data' } },
          ],
        },
      ],
    });
    // n is missing, so data has no length and ends nowhere, and opt (left out for status 1) sits at the frame's end
    const c = applyFieldMap(m, Uint8Array.of(1), 'response');
    expect(c.fields.map((f) => [f.id, f.offset, f.absent, f.truncated])).toEqual([
      ['st', 0, false, false],
      ['n', 1, false, true],
      ['data', 2, false, true],
      ['opt', 1, true, false],
    ]);
  });

  it('gives each attribute bit of a CP/M name its own flag (CP/M 3 Programmer’s Guide 2.3: f1’–f4’; CP/M 2.2 manual 5.2 Table 5-2: t1’, t2’)', () => {
    const names = ['f1', 'f2', 'f3', 'f4', 'readOnly', 'system', 'archive'] as const;
    const at = [0, 1, 2, 3, 8, 9, 10];
    names.forEach((name, k) => {
      const raw = cpmName('ABCDEFGH.IJK');
      raw[at[k]] |= 0x80;
      const d = decodeCpmName(raw);
      expect(d.text).toBe('ABCDEFGH.IJK');
      expect(Object.entries(d.attributes).filter(([, v]) => v).map(([n]) => n), name).toEqual([name]);
    });
  });

  it('reads a short name as if padded with spaces and with no attributes past its end', () => {
    const d = decodeCpmName(Uint8Array.of(0x41 | 0x80, 0x42));
    expect(d).toEqual({ text: 'AB', attributes: { f1: true, f2: false, f3: false, f4: false, readOnly: false, system: false, archive: false } });
  });

  it('gives a left-out field its name, role and meaning, and its id as name when it has none', () => {
    const m = parseFieldMap({
      name: 'named',
      version: 1,
      layouts: [
        {
          id: 'a',
          fields: [
            { id: 'st', type: 'u8', role: 'status' },
            { id: 'rec', type: 'bytes', length: 4, name: 'Record', role: 'record-data', meaning: 'the data read', onlyIfStatus: [0] },
            { id: 'pad', type: 'u8', onlyIfStatus: [0] },
          ],
        },
      ],
    });
    const c = applyFieldMap(m, Uint8Array.of(1), 'response');
    expect(c.fields.slice(1).map((f) => [f.id, f.name, f.role, f.meaning, f.absent])).toEqual([
      ['rec', 'Record', 'record-data', 'the data read', true],
      ['pad', 'pad', null, null, true],
    ]);
  });

  it('gives no record number from a current record without an extent', () => {
    const m = parseFieldMap({ name: 'cr only', version: 1, layouts: [{ id: 'a', fields: [{ id: 'cr', type: 'u8', role: 'current-record' }] }] });
    expect(applyFieldMap(m, Uint8Array.of(5), 'request').recordNumber).toBeNull();
  });
});
