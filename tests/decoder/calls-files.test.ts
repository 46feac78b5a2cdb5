import { describe, expect, it } from 'vitest';
import { BDOS, CPM_ENVELOPE } from '../../shared/decoder/calls/cpm-envelope';
import { pairExchanges } from '../../shared/decoder/calls/exchanges';
import { directoryListing, missingRanges, recoverFiles } from '../../shared/decoder/calls/files';
import {
  bootCalls,
  directoryCalls,
  readFileCalls,
  readRandomCalls,
  requestInfo,
  responseInfo,
  Tags,
  toRecords,
  updateRecordCalls,
  writeFileCalls,
  type ScriptCall,
  type SessionScript,
} from '../../shared/decoder/encode/calls';
import { seededRng } from '../../shared/decoder/encode/line-bits';
import { BIT_RATE, decodeScript, framesOfSession, pairDecoded } from './calls-helpers';
import { encodeSession } from '../../shared/decoder/encode/calls';

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

  // CP/M 2.2 Interface Guide (from memory): 128 records per extent, so record 128 is ex 1, cr 0.
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

  it('rebuilds a written file from the write requests', () => {
    const data = randomBytes(128 * 3, 5);
    const { files } = recover([{ address: 0x22, calls: writeFileCalls('ACCOUNTS.DAT', data, { tags: new Tags(), delay: 0.0005 }) }]);
    expect(files[0]).toMatchObject({ name: 'ACCOUNTS.DAT', recordCount: 3, endKnown: false });
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
  // CP/M 2.2 Interface Guide, search first/next (from memory): the answer's directory code picks
  // one of the four 32-byte entries in the returned record; 0FFH means no (more) matches.
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
