import { describe, expect, it } from 'vitest';
import { ClockRecovery, MAX_SILENT_CELLS } from '../../shared/decoder/clock-recovery';
import { LinkBits } from '../../shared/decoder/link-bits';
import { createDecoder, type DecoderOptions } from '../../shared/decoder/pipeline';
import { MAX_HEADER_BYTES, MAX_VARS, VcdReader } from '../../shared/decoder/readers/vcd';
import type { DecodedFrame, DecodeIssue } from '../../shared/decoder/types';
import { recordingSink } from './support/signals';

const text = (s: string) => new TextEncoder().encode(s);

/** decodes `bytes` in one piece; counts frames and the bits the deframers were handed */
function decode(bytes: Uint8Array, options: DecoderOptions) {
  const frames: DecodedFrame[] = [];
  const d = createDecoder(options, { frame: (f) => frames.push(f), event: () => {} });
  d.push(bytes);
  d.finish();
  return { frames, fatal: d.fatal(), issues: d.issues as DecodeIssue[] };
}

function countingLink() {
  const counted = { bits: 0 };
  const out = new LinkBits('rx', 'nrz', false, { bits: (_l, c) => (counted.bits += c.n), event: () => {} });
  return { out, counted };
}

// Issue: a line without a clock and a huge forward time gap made clock recovery walk the gap bit by bit.
describe('clock recovery over a silent stretch', () => {
  it(`counts at most ${MAX_SILENT_CELLS} cells of a stretch without transitions, however long`, () => {
    const { out, counted } = countingLink();
    const cr = new ClockRecovery(10, out);
    cr.change(0, 1);
    cr.change(100, 0);
    cr.change(200, 1);
    // 10 million bits of silence, then the line moves again
    cr.reach(1e8, false);
    cr.change(1e8 + 5, 0);
    cr.change(1e8 + 25, 1);
    cr.reach(1e8 + 100, true);
    out.flush();
    expect(counted.bits).toBeGreaterThan(MAX_SILENT_CELLS);
    expect(counted.bits).toBeLessThan(MAX_SILENT_CELLS + 60);
  });

  it('locks again on the first edge after the silence and samples mid-cell from there', () => {
    const samples: number[] = [];
    const out = new LinkBits('rx', 'nrz', false, {
      bits: (_l, c) => {
        for (let i = 0; i < c.n; i++) samples.push(c.samples[i]);
      },
      event: () => {},
    });
    const cr = new ClockRecovery(10, out);
    cr.change(0, 1);
    cr.change(10, 0);
    cr.change(1e9, 1);
    cr.change(1e9 + 30, 0);
    cr.reach(1e9 + 60, true);
    out.flush();
    const after = samples.filter((s) => s > 1e9);
    expect(after[0]).toBe(1e9 + 5);
    expect(after.slice(0, 3)).toEqual([1e9 + 5, 1e9 + 15, 1e9 + 25]);
  });
});

describe('a small capture with a huge time gap decodes promptly', () => {
  it('CSV: a forward gap of 9e15 ns on a line without a clock', () => {
    // 66 bytes: the third row is 9 000 000 s (9e15 ns steps) after the second
    const csv = 'time,d\n0,1\n0.000000001,0\n0.000002,1\n9000000,0\n9000000.000001,1\n';
    expect(csv.length).toBeLessThanOrEqual(66);
    const r = decode(text(csv), { format: 'csv', data: ['d'], bitRate: 1e6 });
    expect(r.fatal).toBeNull();
  });

  it('VCD: a forward gap of 9e14 time units on a line without a clock', () => {
    const vcd = '$var wire 1 ! d $end $enddefinitions $end\n#0 1!\n#9 0!\n#900000000000000 1!\n';
    const r = decode(text(vcd), { format: 'vcd', data: ['d'], bitRate: 1e8 });
    expect(r.fatal).toBeNull();
  });
});

describe('times that cannot be placed are malformed input', () => {
  for (const [what, time] of [
    ['beyond 2^53', '9007199254740993'],
    ['infinite', '1e999'],
  ] as const) {
    it(`CSV: a time ${what} stops the decode with the row named`, () => {
      const r = decode(text(`time,d\n0,1\n0.001,0\n${time},1\n`), { format: 'csv', data: ['d'], bitRate: 100 });
      expect(r.fatal).toMatchObject({ line: 4, expected: 'a finite time within range' });
      expect(r.fatal!.message).toContain(time);
    });
  }

  it('VCD: a time beyond 2^53 stops the decode with the line named', () => {
    const r = decode(text('$var wire 1 ! d $end $enddefinitions $end\n#0 1!\n#9007199254740993\n0!\n'), { format: 'vcd', data: ['d'], bitRate: 1e8 });
    expect(r.fatal).toMatchObject({ line: 3 });
    expect(r.fatal!.message).toContain('9007199254740993');
  });

  // IEEE Std 1364-2001 §18.2.1 (simulation_time ::= # decimal_number; section from a secondary source):
  // a dump is written as simulation time advances, so a time going back is a damaged file (from memory).
  it('VCD: a time going back is a malformed line (a strict caller stops there)', () => {
    const r = decode(text('$var wire 1 ! d $end $enddefinitions $end\n#0 1!\n#20 0!\n#10 1!\n'), { format: 'vcd', data: ['d'], bitRate: 1e8 });
    const back = r.issues.find((i) => /goes back/.test(i.message));
    expect(back).toMatchObject({ line: 4, skipped: true });
    expect(back!.message).toContain('line 4');
  });
});

describe('sample rate against bit rate', () => {
  it('refuses to recover a clock when a bit spans fewer than 2 samples (raw at 3 Hz)', () => {
    const r = decode(new Uint8Array(64).map((_, i) => i & 1), { format: 'raw', sampleRate: 3, data: ['0'], bitRate: 9600 });
    expect(r.fatal).toMatchObject({ setting: 'bitRate' });
    expect(r.fatal!.message).toMatch(/at least 2 samples per bit/);
  });

  it('accepts 2 samples per bit', () => {
    const r = decode(new Uint8Array(64).map((_, i) => i & 1), { format: 'raw', sampleRate: 19200, data: ['0'], bitRate: 9600 });
    expect(r.fatal).toBeNull();
  });

  it('needs no such check with a clock channel: the clock gives the bits', () => {
    const r = decode(new Uint8Array(64).map((_, i) => i & 3), { format: 'raw', sampleRate: 3, clock: '0', data: ['1'], bitRate: 9600 });
    expect(r.fatal).toBeNull();
  });
});

describe('VCD header size', () => {
  function header(vars: number): string {
    let s = '$timescale 1 ns $end\n$scope module top $end\n';
    for (let i = 0; i < vars; i++) s += `$var wire 1 v${i} s${i} $end\n`;
    return s + '$upscope $end\n$enddefinitions $end\n#0 1v0\n#5 0v0\n';
  }

  it(`keeps at most ${MAX_VARS} declarations, counts the rest and says so once`, () => {
    const sink = recordingSink();
    const r = new VcdReader({}, sink);
    r.push(text(header(MAX_VARS + 5000)));
    r.push(text(`#9 1v${MAX_VARS + 4000}\n`));
    r.finish();
    expect(r.fatal()).toBeNull();
    expect(r.vars.length).toBe(MAX_VARS);
    expect(r.varsNotKept).toBe(5000);
    const notes = r.issues.filter((i) => /only the first/.test(i.message));
    expect(notes).toHaveLength(1);
    // a change of a declaration that was not kept is skipped without a note of its own
    expect(r.issues.filter((i) => /never declared/.test(i.message))).toEqual([]);
  });

  it(`refuses a header longer than ${MAX_HEADER_BYTES >> 20} MiB with a clear message`, () => {
    const sink = recordingSink();
    const r = new VcdReader({}, sink);
    const line = text('$comment padding padding padding padding padding padding $end\n');
    const block = new Uint8Array(line.length * 4096);
    for (let i = 0; i < 4096; i++) block.set(line, i * line.length);
    for (let at = 0; at <= MAX_HEADER_BYTES && !r.fatal(); at += block.length) r.push(block);
    expect(r.fatal()).toMatchObject({ expected: expect.stringContaining('$enddefinitions within the first') });
    expect(r.fatal()!.message).toMatch(/refuses headers this long/);
  });
});
