import { describe, expect, it } from 'vitest';
import { renderWaveform, collect, vcdChunks } from '../../shared/decoder/encode';
import { VcdReader } from '../../shared/decoder/readers';
import { feed, randomBits, randomSplit, recordingSink, waveformList } from './support/signals';

const text = (s: string) => new TextEncoder().encode(s);

// Hand-written in the form IEEE Std 1364-2001 §18.2 gives for a four-state VCD file (subclause numbers
// from a secondary source annotated against the 2001 edition, see shared/decoder/readers/vcd.ts): declaration
// commands ($date, $version, $comment, $timescale, $scope/$upscope, $var, $enddefinitions),
// then simulation commands ($dumpvars, $dumpoff, $dumpon, #time) and value changes.
const HAND = `$date
   December 1, 2026
$end
$version
   hand-written test file
$end
$comment
   two links under nested scopes; both data lines are called "data"
$end
$timescale 1 ps $end
$scope module rig $end
$var wire 1 ! clk $end
$scope module tx $end
$var wire 1 " data $end
$var wire 1 #a rts $end
$upscope $end
$scope module rx $end
$var wire 1 $ data $end
$var reg 8 % status [7:0] $end
$var real 64 & level $end
$upscope $end
$upscope $end
$enddefinitions $end
#0
$dumpvars
x!
0"
z#a
1$
b00000000 %
r0.5 &
$end
#100
1!
b1 "
#150
0!
1#a
#200
1!
$comment a note among the changes $end
#250
$dumpoff
x!
x"
x#a
x$
bxxxxxxxx %
$end
#400
$dumpon
0!
1"
1#a
0$
b00000001 %
$end
#500
1!
Z$
#600
`;

const EXPECTED: [number, number, number][] = [
  [0, 0, 2],
  [1, 0, 0],
  [2, 0, 2],
  [3, 0, 1],
  [0, 100, 1],
  [1, 100, 1],
  [0, 150, 0],
  [2, 150, 1],
  [0, 200, 1],
  [0, 250, 2],
  [1, 250, 2],
  [2, 250, 2],
  [3, 250, 2],
  [0, 400, 0],
  [1, 400, 1],
  [2, 400, 1],
  [3, 400, 0],
  [0, 500, 1],
  [3, 500, 2],
  // end of capture: every level repeated at the last time
  [0, 600, 1],
  [1, 600, 1],
  [2, 600, 1],
  [3, 600, 2],
];

function read(bytes: Uint8Array | Uint8Array[]) {
  const sink = recordingSink();
  const reader = new VcdReader({}, sink);
  feed(reader, Array.isArray(bytes) ? bytes : [bytes]);
  return { reader, rec: sink.rec };
}

describe('VCD reader', () => {
  it('reads a hand-written dump with a 1 ps timescale, nested and repeated scopes, x/z and $dumpoff (IEEE Std 1364-2001 §18.2)', () => {
    const { reader, rec } = read(text(HAND));
    expect(reader.fatal()).toBeNull();
    expect(rec.headers).toBe(1);
    // IEEE Std 1364-2001 §18.2.3.5 ($timescale): 1 ps → one time unit is 1e-12 s
    expect(rec.samplePeriodSeconds).toBe(1e-12);
    // the same reference in two scopes is addressed as scope.name; unique references stay plain
    expect(rec.channels.map((c) => c.name)).toEqual(['clk', 'rig.tx.data', 'rts', 'rig.rx.data']);
    expect(rec.list).toEqual(EXPECTED);
  });

  it('lists vectors and reals as declared but makes channels only of 1-bit signals', () => {
    const { reader } = read(text(HAND));
    const bus = reader.vars.find((v) => v.reference === 'status[7:0]');
    expect(bus).toMatchObject({ width: 8, channel: -1, scope: ['rig', 'rx'] });
    expect(reader.vars.find((v) => v.reference === 'level')).toMatchObject({ type: 'real', channel: -1 });
    expect(reader.vars.find((v) => v.id === '#a')).toMatchObject({ reference: 'rts', scope: ['rig', 'tx'], channel: 2 });
  });

  it('reports each signal that goes unknown (x or z) once, with its line', () => {
    const { reader } = read(text(HAND));
    const unknown = reader.issues.filter((i) => i.expected === '0 or 1');
    expect(unknown.map((i) => i.message.match(/"([^"]+)"/)?.[1])).toEqual(['clk', 'rts', 'rig.tx.data', 'rig.rx.data']);
    expect(unknown[0].line).toBe(26);
    expect(reader.issues).toHaveLength(4);
  });

  it('gives identical output for any split of the input into chunks', () => {
    const whole = text(HAND);
    for (let seed = 1; seed <= 30; seed++) {
      const { rec } = read(randomSplit(whole, seed, 13));
      expect(rec.list).toEqual(EXPECTED);
    }
    // one byte at a time
    const { rec } = read(Array.from(whole, (b) => Uint8Array.of(b)));
    expect(rec.list).toEqual(EXPECTED);
  });

  it('reads a chosen vector as one channel per bit, extending short values (IEEE Std 1364-2001 §18.2.2, Table 83, rules for left-extending vector values; subclause from memory)', () => {
    const dump = '$timescale 1 ns $end\n$scope module top $end\n$var wire 1 ! clk $end\n$var reg 4 % port [7:4] $end\n$upscope $end\n$enddefinitions $end\n#0\n0!\nb1010 %\n#5\nb1 %\n#9\nbx %\n#12\nb0110 %\n';
    const sink = recordingSink();
    const reader = new VcdReader({ vcdBuses: ['top.port'] }, sink);
    feed(reader, randomSplit(text(dump), 4, 9));
    expect(sink.rec.channels.map((c) => c.name)).toEqual(['clk', 'port[7]', 'port[6]', 'port[5]', 'port[4]']);
    const at = (s: number) => sink.rec.list.filter((x) => x[1] === s && x[0] > 0).map((x) => [x[0], x[2]]);
    expect(at(0)).toEqual([
      [1, 1],
      [2, 0],
      [3, 1],
      [4, 0],
    ]);
    // "b1" is 0001: a leading 0 or 1 extends with 0
    expect(at(5)).toEqual([
      [1, 0],
      [3, 0],
      [4, 1],
    ]);
    // "bx" extends with x
    expect(at(9)).toEqual([
      [1, 2],
      [2, 2],
      [3, 2],
      [4, 2],
    ]);
    expect(at(12).slice(0, 4)).toEqual([
      [1, 0],
      [2, 1],
      [3, 1],
      [4, 0],
    ]);
    // without choosing it the vector is no channel
    expect(read(text(dump)).rec.channels.map((c) => c.name)).toEqual(['clk']);
  });

  it('accepts identifier codes of any printable characters, several characters long', () => {
    const codes = ['~', '}|', 'a{b', '"#$%&\'()', 'x1'];
    const decl = codes.map((c, i) => `$var wire 1 ${c} s${i} $end`).join('\n');
    const body = codes.map((c) => `1${c}`).join('\n');
    const { rec, reader } = read(text(`$timescale 10 ns $end\n${decl}\n$enddefinitions $end\n#0\n${body}\n#5\n`));
    expect(reader.issues).toEqual([]);
    expect(rec.samplePeriodSeconds).toBe(1e-8);
    expect(rec.list.slice(0, 5)).toEqual(codes.map((_, i) => [i, 0, 1]));
  });

  it('reads a dump with more signals than one-character identifier codes can name', () => {
    const handshake = Array.from({ length: 120 }, (_, k) => ({
      name: `line${k}`,
      initial: (k & 1) as 0 | 1,
      edges: [{ bit: k % 50, level: (1 - (k & 1)) as 0 | 1 }, { bit: 60 + (k % 30), level: (k & 1) as 0 | 1 }],
    }));
    const w = renderWaveform({ links: [{ name: 'd', bits: randomBits(100, 1) }], samplesPerBit: 4, samplePeriodSeconds: 1e-6, encoding: 'nrz', handshake });
    const bytes = collect(vcdChunks(w));
    const { rec, reader } = read(randomSplit(bytes, 3, 40));
    expect(reader.issues).toEqual([]);
    expect(rec.channels).toHaveLength(121);
    expect(rec.list).toEqual(waveformList(w));
  });

  it('shares one identifier code between several declarations (IEEE Std 1364-2001 §18.2.3.8, $var)', () => {
    const { rec } = read(text('$timescale 1 us $end\n$scope module a $end\n$var wire 1 ! sig $end\n$upscope $end\n$scope module b $end\n$var wire 1 ! sig $end\n$upscope $end\n$enddefinitions $end\n#0\n0!\n#3\n1!\n'));
    expect(rec.channels.map((c) => c.name)).toEqual(['a.sig', 'b.sig']);
    expect(rec.list).toEqual([
      [0, 0, 0],
      [1, 0, 0],
      [0, 3, 1],
      [1, 3, 1],
      [0, 3, 1],
      [1, 3, 1],
    ]);
  });

  it('starts channels the first time leaves out as unknown', () => {
    const { rec } = read(text('$timescale 1 ns $end\n$var wire 1 ! a $end\n$var wire 1 " b $end\n$enddefinitions $end\n#10\n1!\n#20\n0"\n'));
    expect(rec.list).toEqual([
      [0, 10, 1],
      [1, 10, 2],
      [1, 20, 0],
      [0, 20, 1],
      [1, 20, 0],
    ]);
  });

  it('reports a time that goes back and keeps the changes at the later time', () => {
    const { rec, reader } = read(text('$timescale 1 ns $end\n$var wire 1 ! a $end\n$enddefinitions $end\n#10\n1!\n#5\n0!\n'));
    expect(reader.issues[0]).toMatchObject({ line: 6, expected: 'a time of at least 10' });
    expect(rec.list).toEqual([
      [0, 10, 1],
      [0, 10, 0],
      [0, 10, 0],
    ]);
  });

  it('reports an undeclared identifier code and skips the change', () => {
    const { rec, reader } = read(text('$timescale 1 ns $end\n$var wire 1 ! a $end\n$enddefinitions $end\n#0\n1!\n1?\n'));
    expect(reader.issues[0].message).toContain('"?" was never declared');
    expect(rec.list).toEqual([
      [0, 0, 1],
      [0, 0, 1],
    ]);
  });

  it('stops with a clear error when the header never ends', () => {
    const { reader, rec } = read(text('$timescale 1 ns $end\n$var wire 1 ! a $end\n#0\n'));
    expect(reader.fatal()?.message).toContain('$enddefinitions is missing');
    expect(rec.headers).toBe(0);
  });

  it('stops with a clear error on a timescale IEEE 1364 does not allow', () => {
    const { reader } = read(text('$timescale 3 ns $end\n$enddefinitions $end\n'));
    expect(reader.fatal()?.message).toContain('"3 ns"');
  });

  it('assumes 1 ns per unit without a $timescale and says so (common practice)', () => {
    const { reader, rec } = read(text('$var wire 1 ! a $end\n$enddefinitions $end\n#0\n1!\n'));
    expect(rec.samplePeriodSeconds).toBe(1e-9);
    expect(reader.issues[0].expected).toBe('$timescale');
  });

  it('reads back what the encoder writes, at a 1 ps timescale under nested scopes', () => {
    const w = renderWaveform({
      links: [
        { name: 'tx', bits: randomBits(300, 1) },
        { name: 'rx', bits: randomBits(250, 2) },
      ],
      samplesPerBit: 10,
      samplePeriodSeconds: 1e-8,
      encoding: 'nrzi',
      clock: { edge: 'rising', name: 'txc' },
      handshake: [{ name: 'rts', initial: 0, edges: [{ bit: 0, level: 1 }, { bit: 200, level: 0 }] }],
      faults: { jitter: 0.1, seed: 4 },
    });
    const bytes = collect(vcdChunks(w, { timescale: '1 ps', scopes: { tx: ['rig', 'port1'], rx: ['rig', 'port2'] }, chunkSize: 500 }));
    const { rec, reader } = read(randomSplit(bytes, 7, 300));
    expect(reader.issues).toEqual([]);
    expect(rec.samplePeriodSeconds).toBe(1e-12);
    expect(rec.channels.map((c) => c.name)).toEqual(['txc', 'tx', 'rx', 'rts']);
    expect(rec.list).toEqual(waveformList(w).map(([c, s, v]) => [c, s * 10000, v]));
    expect(reader.bytesRead).toBe(bytes.length);
  });
});
