import { describe, expect, it } from 'vitest';
import { renderWaveform, collect, csvChunks, type CsvWriterOptions } from '../../shared/decoder/encode';
import { CsvReader } from '../../shared/decoder/readers';
import type { ReaderOptions } from '../../shared/decoder';
import { feed, randomBits, randomSplit, recordingSink, waveformList } from './support/signals';

const text = (s: string) => new TextEncoder().encode(s);

function read(input: string | Uint8Array | Uint8Array[], opts: ReaderOptions = {}) {
  const sink = recordingSink();
  const reader = new CsvReader(opts, sink);
  const bytes = typeof input === 'string' ? [text(input)] : Array.isArray(input) ? input : [input];
  feed(reader, bytes);
  return { reader, rec: sink.rec };
}

// CSV sample tables follow common practice for logic-analyzer exports: a header row of
// names, a time column in seconds, one 0/1 column per channel, every sample or change rows.
describe('CSV reader', () => {
  it('turns a change-rows table with a seconds column into sample indices at the finest decimal step (common practice)', () => {
    const csv = 'time,clock,data\n0.000000000,1,1\n0.000000125,0,1\n0.000000250,1,0\n0.000000375,0,0\n0.0000005,1,0\n';
    const { rec, reader } = read(csv);
    expect(reader.issues).toEqual([]);
    expect(rec.channels.map((c) => c.name)).toEqual(['clock', 'data']);
    expect(rec.samplePeriodSeconds).toBe(1e-9);
    expect(rec.list).toEqual([
      [0, 0, 1],
      [1, 0, 1],
      [0, 125, 0],
      [0, 250, 1],
      [1, 250, 0],
      [0, 375, 0],
      [0, 500, 1],
      [0, 500, 1],
      [1, 500, 0],
    ]);
  });

  it('reads times written in exponent form without rounding (common practice)', () => {
    const { rec } = read('Time [s],a\n1.250000e-07,0\n2.500000e-07,1\n3.75e-7,0\n');
    expect(rec.samplePeriodSeconds).toBe(1e-9);
    // sample 0 is the first row
    expect(rec.list.slice(0, 3)).toEqual([
      [0, 0, 0],
      [0, 125, 1],
      [0, 250, 0],
    ]);
  });

  it('counts from the first row when times start below zero (trigger-relative exports, common practice)', () => {
    const { rec } = read('t,a\n-0.002,0\n-0.001,1\n0.000,1\n0.001,0\n');
    expect(rec.samplePeriodSeconds).toBe(1e-3);
    expect(rec.list).toEqual([
      [0, 0, 0],
      [0, 1, 1],
      [0, 3, 0],
      [0, 3, 0],
    ]);
  });

  it('uses the given sample rate for a seconds column', () => {
    const { rec } = read('time,a\n0,1\n0.00001,0\n0.00002,1\n', { sampleRate: 1e6 });
    expect(rec.samplePeriodSeconds).toBe(1e-6);
    expect(rec.list.map((x) => x[1])).toEqual([0, 10, 20, 20]);
  });

  it('reads a sample-number column with the given sample rate', () => {
    const { rec } = read('sample,clk,d\n0,0,0\n1,1,0\n2,0,1\n3,1,1\n', { sampleRate: 8e6 });
    expect(rec.samplePeriodSeconds).toBe(1 / 8e6);
    expect(rec.list).toEqual([
      [0, 0, 0],
      [1, 0, 0],
      [0, 1, 1],
      [0, 2, 0],
      [1, 2, 1],
      [0, 3, 1],
      [0, 3, 1],
      [1, 3, 1],
    ]);
  });

  it('stops with a clear error when a sample-number column has no sample rate', () => {
    const { reader, rec } = read('sample,clk\n0,0\n1,1\n');
    expect(reader.fatal()?.message).toContain('give the sample rate');
    expect(rec.headers).toBe(0);
  });

  it('treats each row as one sample when there is no time column but a sample rate', () => {
    const { rec } = read('clk,d\n0,1\n1,1\n0,0\n', { sampleRate: 1e6 });
    expect(rec.list).toEqual([
      [0, 0, 0],
      [1, 0, 1],
      [0, 1, 1],
      [0, 2, 0],
      [1, 2, 0],
      [0, 2, 0],
      [1, 2, 0],
    ]);
  });

  it('stops with a clear error when there is neither a time column nor a sample rate', () => {
    const { reader } = read('clk,d\n0,1\n');
    expect(reader.fatal()).toMatchObject({ line: 1, expected: 'a time column such as "time" (seconds)' });
  });

  it('accepts semicolons, quoted names and CRLF line ends (common practice)', () => {
    const { rec, reader } = read('"Time (s)";"TxD";"RTS"\r\n0.0;1;0\r\n0.5;0;1\r\n');
    expect(reader.issues).toEqual([]);
    expect(rec.channels.map((c) => c.name)).toEqual(['TxD', 'RTS']);
    expect(rec.list.slice(0, 4)).toEqual([
      [0, 0, 1],
      [1, 0, 0],
      [0, 5, 0],
      [1, 5, 1],
    ]);
  });

  it('marks cells other than 0/1 unknown and reports the column once', () => {
    const { rec, reader } = read('time,a\n0,1\n1,?\n2,#\n3,0\n');
    expect(rec.list.map((x) => x[2])).toEqual([1, 2, 0, 0]);
    expect(reader.issues).toHaveLength(1);
    expect(reader.issues[0]).toMatchObject({ line: 3, expected: '0 or 1', skipped: true });
  });

  // x and z as in a VCD (IEEE Std 1364-2001 §18.2.1, value ::= 0 | 1 | x | X | z | Z; section from a
  // secondary source): an unknown level is data, not a malformed cell, so a strict caller goes on.
  it('warns of unknown levels (x, z) with their row and signal, once per signal, without marking anything skipped', () => {
    const { rec, reader } = read('time,a,b\n0,1,0\n1,x,0\n2,1,Z\n3,X,1\n4,0,z\n');
    // the last entry is the end-of-capture marker
    expect(rec.list.filter((x) => x[0] === 0).map((x) => x[2])).toEqual([1, 2, 1, 2, 0, 0]);
    expect(reader.fatal()).toBeNull();
    expect(reader.issues.map((i) => [i.line, i.skipped ?? false, /"a"|"b"/.exec(i.message)?.[0]])).toEqual([
      [3, false, '"a"'],
      [4, false, '"b"'],
    ]);
    expect(reader.issues[0].message).toMatch(/unknown \(x or z\) from row 3 \(sample 1\)/);
  });

  it('reports and skips rows that go back in time or have no time', () => {
    const { rec, reader } = read('time,a\n0,1\n2,0\n1,1\nnope,1\n3,1\n');
    expect(reader.issues.map((i) => i.line)).toEqual([4, 5]);
    expect(rec.list.map((x) => x.slice(1))).toEqual([
      [0, 1],
      [2, 0],
      [3, 1],
      [3, 1],
    ]);
  });

  it('stops with a clear error on a file with a header but no rows', () => {
    expect(read('time,a\n').reader.fatal()?.message).toContain('no rows');
  });

  it('gives identical output for any split of the input into chunks', () => {
    const rows = ['time,clock,data,rts'];
    for (let i = 0; i < 3000; i++) rows.push(`${(i * 1.25e-7).toFixed(9)},${i & 1},${(i >> 3) & 1},${i > 1500 ? 1 : 0}`);
    const bytes = text(rows.join('\r\n'));
    const whole = read(bytes).rec.list;
    expect(whole.length).toBeGreaterThan(3000);
    for (let seed = 1; seed <= 10; seed++) expect(read(randomSplit(bytes, seed, 200)).rec.list).toEqual(whole);
  });

  const w = renderWaveform({
    links: [{ name: 'data', bits: randomBits(400, 3) }],
    samplesPerBit: 8,
    samplePeriodSeconds: 1e-7,
    encoding: 'nrz',
    clock: { edge: 'falling' },
    handshake: [{ name: 'cts', initial: 1, edges: [{ bit: 100, level: 0 }] }],
    faults: { jitter: 0.1, seed: 9 },
  });
  const cases: [string, CsvWriterOptions, ReaderOptions][] = [
    ['change rows with seconds', {}, {}],
    ['every sample with seconds', { rows: 'every' }, {}],
    ['change rows with sample numbers', { time: 'sample' }, { sampleRate: 1e7 }],
    ['every sample without a time column', { time: 'none', rows: 'every' }, { sampleRate: 1e7 }],
    ['tab-separated change rows', { delimiter: '\t' }, {}],
  ];
  for (const [name, wopts, ropts] of cases) {
    it(`reads back what the encoder writes: ${name}`, () => {
      const bytes = collect(csvChunks(w, { ...wopts, chunkSize: 1000 }));
      const { rec, reader } = read(randomSplit(bytes, 5, 400), ropts);
      expect(reader.issues).toEqual([]);
      expect(rec.samplePeriodSeconds).toBeCloseTo(1e-7, 15);
      expect(rec.list).toEqual(waveformList(w));
    });
  }
});
