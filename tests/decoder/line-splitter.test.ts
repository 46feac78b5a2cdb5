import { describe, expect, it } from 'vitest';
import { CsvReader } from '../../shared/decoder/readers/csv';
import { FrameLogReader } from '../../shared/decoder/readers/framelog';
import { LineSplitter } from '../../shared/decoder/readers/line-splitter';
import { VcdReader } from '../../shared/decoder/readers/vcd';
import { feed, randomSplit, recordingSink } from './support/signals';

const utf8 = (s: string) => new TextEncoder().encode(s);

/** every way of cutting `bytes` in two, and one byte at a time */
function splits(bytes: Uint8Array): Uint8Array[][] {
  const out: Uint8Array[][] = [[bytes], Array.from(bytes, (_, i) => bytes.subarray(i, i + 1))];
  for (let k = 1; k < bytes.length; k++) out.push([bytes.subarray(0, k), bytes.subarray(k)]);
  return out;
}

function lines(pieces: Uint8Array[]): { text: string; offset: number }[] {
  const got: { text: string; offset: number }[] = [];
  const s = new LineSplitter(
    1 << 20,
    (buf, start, end, offset) => got.push({ text: new TextDecoder().decode(buf.subarray(start, end)), offset }),
    () => {},
    () => false,
  );
  let base = 0;
  for (const p of pieces) {
    s.push(p, base);
    base += p.length;
  }
  s.finish();
  return got;
}

// Issue: one line splitter for the CSV and frame-log readers, and the VCD tokenizer's carry; chunks may
// split anywhere, inside a multi-byte UTF-8 character (RFC 3629) or between CR and LF.
describe('line splitting across chunks', () => {
  const text = 'time,Störung,“data”\r\n0,1,0\r\n0.5,0,1\n1,1,1';
  const bytes = utf8(text);

  it('gives the same lines, with their file offsets, however the chunks are cut', () => {
    const want = lines([bytes]);
    expect(want.map((l) => l.text)).toEqual(['time,Störung,“data”\r', '0,1,0\r', '0.5,0,1', '1,1,1']);
    expect(want.map((l) => l.offset)).toEqual([0, utf8('time,Störung,“data”\r\n').length, utf8('time,Störung,“data”\r\n0,1,0\r\n').length, bytes.length - 5]);
    for (const pieces of splits(bytes)) expect(lines(pieces)).toEqual(want);
  });

  it('stops carrying a line past its limit and says where it began', () => {
    const long: number[] = [];
    const s = new LineSplitter(8, () => {}, (offset) => long.push(offset), () => false);
    s.push(utf8('ok\n0123'), 0);
    s.push(utf8('456789'), 7);
    expect(long).toEqual([3]);
  });

  it('CSV: a UTF-8 column name and CRLF rows read the same in any cut', () => {
    const read = (pieces: Uint8Array[]) => {
      const sink = recordingSink();
      const r = feed(new CsvReader({}, sink), pieces);
      return { channels: sink.rec.channels.map((c) => c.name), list: sink.rec.list, issues: r.issues };
    };
    const want = read([bytes]);
    expect(want.channels).toEqual(['Störung', '“data”']);
    expect(want.issues).toEqual([]);
    for (const pieces of splits(bytes)) expect(read(pieces)).toEqual(want);
  });

  it('frame log: a UTF-8 link name and CRLF lines read the same in any cut', () => {
    const log = utf8('0.25 prüf: 31 32 33 34 35 36 37 38 39 6e 90\r\n0.5 prüf: 313233343536373839 6e98\r\n');
    const read = (pieces: Uint8Array[]) => {
      const frames: string[] = [];
      const r = feed(new FrameLogReader({}, { header: () => {}, frame: (link, first, _last, b) => frames.push(`${link} ${first} ${b.length}`) }), pieces);
      return { frames, issues: r.issues };
    };
    const want = read([log]);
    expect(want.frames).toEqual(['prüf 250000000 11', 'prüf 500000000 11']);
    for (const pieces of splits(log)) expect(read(pieces)).toEqual(want);
  });

  it('VCD: tokens cut anywhere, also inside a UTF-8 scope name and a CRLF, read the same', () => {
    const vcd = utf8('$timescale 1 ns $end\r\n$scope module Zähler $end\r\n$var wire 1 ! d $end\r\n$upscope $end\r\n$enddefinitions $end\r\n#0\r\n1!\r\n#15\r\n0!\r\n#30 1!\r\n');
    const read = (pieces: Uint8Array[]) => {
      const sink = recordingSink();
      const r = feed(new VcdReader({}, sink), pieces) as VcdReader;
      return { scope: r.vars.map((v) => v.scope.join('.')), list: sink.rec.list, issues: r.issues };
    };
    const want = read([vcd]);
    expect(want.list.map((x) => x[1])).toEqual([0, 15, 30, 30]);
    expect(want.issues).toEqual([]);
    for (const pieces of splits(vcd)) expect(read(pieces)).toEqual(want);
    for (let seed = 1; seed < 20; seed++) expect(read(randomSplit(vcd, seed, 7))).toEqual(want);
  });
});
