import { spawn } from 'node:child_process';
import { mkdtempSync, rmSync, writeFileSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { collect, frameLogChunks, rawChunks, vcdChunks } from '../../shared/decoder/encode';
import { decodeCli } from './cli-command';
import { clockedWaveform, encodeLineBits, traffic } from './pipeline-helpers';

let dir: string;
const file = (name: string) => join(dir, name);

function run(args: string[], shellPipe?: string): Promise<{ code: number | null; stdout: string; stderr: string }> {
  return new Promise((resolve) => {
    const cmd = [process.execPath, decodeCli, ...args].map((a) => `'${a}'`).join(' ');
    const child = shellPipe
      ? spawn('bash', ['-c', `set -o pipefail; ${cmd} ${shellPipe}`])
      : spawn(process.execPath, [decodeCli, ...args]);
    let stdout = '';
    let stderr = '';
    child.stdout.on('data', (d) => (stdout += d));
    child.stderr.on('data', (d) => (stderr += d));
    child.on('close', (code) => resolve({ code, stdout, stderr }));
  });
}

const lines = (s: string) => s.trim().split('\n').filter(Boolean).map((l) => JSON.parse(l));

beforeAll(() => {
  dir = mkdtempSync(join(tmpdir(), 'flagline-cli-'));
  const a = traffic(11, 40);
  const b = traffic(12, 40);
  const w = clockedWaveform([
    { name: 'tx', bits: encodeLineBits(a.items).bits },
    { name: 'rx', bits: encodeLineBits(b.items).bits },
  ]);
  writeFileSync(file('two-links.bin'), collect(rawChunks(w)));
  writeFileSync(file('two-links.vcd'), collect(vcdChunks(w, { timescale: '1 ns' })));
  // Many frames so the output is far larger than a pipe buffer.
  const many = traffic(13, 4000);
  const wm = clockedWaveform([{ name: 'tx', bits: encodeLineBits(many.items).bits }]);
  writeFileSync(file('many.bin'), collect(rawChunks(wm)));
  const body = new TextEncoder().encode('123456789');
  writeFileSync(
    file('frames.log'),
    collect(
      frameLogChunks([
        { seconds: 0.25, bytes: new Uint8Array([...body, 0x6e, 0x90]), link: 'tx' },
        { seconds: 0.5, bytes: new Uint8Array([...body, 0x6e, 0x98]), link: 'tx' },
      ]),
    ),
  );
  writeFileSync(file('prose.txt'), 'Dear diary,\nnothing here is a capture.\n');
  // Cut off inside its header.
  writeFileSync(file('broken.vcd'), '$timescale 1 ns $end\n$scope module top $end\n$var wire 1 ! clk $end\n$var wire 1 " tx $end\n');
  // A body line that is no time (IEEE Std 1364-2001 §18.2.1: simulation_time ::= # decimal_number; subclause from a secondary source).
  writeFileSync(
    file('back-time.vcd'),
    '$timescale 1 ns $end\n$scope module top $end\n$var wire 1 ! clk $end\n$var wire 1 " tx $end\n$upscope $end\n$enddefinitions $end\n#0 0! 1"\n#5 1!\n#3 0!\n#9 1!\n',
  );
  writeFileSync(
    file('bad-time.vcd'),
    '$timescale 1 ns $end\n$scope module top $end\n$var wire 1 ! clk $end\n$var wire 1 " tx $end\n$upscope $end\n$enddefinitions $end\n#0\n0!\n1"\n#1x2\n1!\n',
  );
});

afterAll(() => rmSync(dir, { recursive: true, force: true }));

const rawArgs = ['--format', 'raw', '--sample-rate', '10M', '--channels', 'clk,tx,rx', '--clock', 'clk', '--data', 'tx,rx'];

describe('decode CLI', () => {
  it('prints one NDJSON frame per line in time order with the link decode and a summary on stderr', async () => {
    const r = await run([file('two-links.bin'), ...rawArgs]);
    expect(r.code).toBe(0);
    const frames = lines(r.stdout);
    expect(frames).toHaveLength(80);
    for (let i = 1; i < frames.length; i++) expect(frames[i].t).toBeGreaterThanOrEqual(frames[i - 1].t);
    const f = frames[0];
    expect(Object.keys(f)).toEqual(expect.arrayContaining(['link', 't', 'status', 'hex', 'fcs', 'address', 'kind', 'command', 'ns', 'nr', 'pf']));
    expect(f.hex).toMatch(/^([0-9a-f]{2})+$/);
    expect(f.fcs).toMatch(/^[0-9a-f]{4}$/);
    expect(new Set(frames.map((x) => x.link))).toEqual(new Set(['tx', 'rx']));
    const bad = frames.find((x) => x.status === 'bad-fcs');
    expect(bad.fcsComputed).toMatch(/^[0-9a-f]{4}$/);
    expect(bad).toHaveProperty('flippedBit');
    expect(r.stderr).toMatch(/tx: 40 frames/);
  });

  it('detects a VCD file and gives the same frames as the raw capture', async () => {
    const [raw, vcd] = await Promise.all([run([file('two-links.bin'), ...rawArgs]), run([file('two-links.vcd'), '--clock', 'clk', '--data', 'tx,rx'])]);
    expect(vcd.code).toBe(0);
    expect(lines(vcd.stdout)).toEqual(lines(raw.stdout));
  });

  it('shows received and computed FCS and the flipped bit of a logged frame (CRC catalogue CRC-16/IBM-SDLC check 0x906E)', async () => {
    const r = await run([file('frames.log')]);
    expect(r.code).toBe(0);
    const [good, bad] = lines(r.stdout);
    expect(good).toMatchObject({ link: 'tx', t: 0.25, status: 'ok', hex: '313233343536373839', fcs: '906e' });
    // Received 0x98 instead of 0x90 in the second FCS octet: bit 3 of octet 10 → index 83.
    expect(bad).toMatchObject({ status: 'bad-fcs', fcs: '986e', fcsComputed: '906e', flippedBit: 83 });
  });

  it('exits with code 2 and one line naming the problem for bad input', async () => {
    const cases: [string[], RegExp][] = [
      [[file('missing.bin')], /cannot read .*missing\.bin: no such file/],
      [[file('two-links.bin'), '--format', 'wav'], /--format must be one of/],
      // a setting left out or not fitting is named by its option, not by an unrelated place in the file
      [[file('two-links.bin'), '--format', 'raw', '--clock', 'clk', '--data', 'tx'], /: option --sample-rate: expected a sample rate/],
      [[file('two-links.bin'), ...rawArgs.slice(0, -1), 'txd'], /: option --data: .*no channel "txd".*clk, tx, rx/],
      [[file('two-links.vcd'), '--settings', 'given', '--clock', 'clk'], /: option --data: expected the data channel/],
      [[file('two-links.vcd'), '--settings', 'given', '--data', 'tx'], /: option --bit-rate: expected a bit rate or a clock channel/],
      // IEEE Std 1364-2001 §18.2.1 (simulation_time ::= # decimal_number; section from a secondary
      // source): times only increase as a dump is written (from memory)
      [[file('back-time.vcd'), '--clock', 'clk', '--data', 'tx'], /at line 9 .*Time goes back from 5 to 3 on line 9.*--lenient/],
      [[file('prose.txt'), '--data', 'x'], /format/],
      [[file('broken.vcd'), '--format', 'vcd', '--clock', 'clk', '--data', 'tx'], /at line 5 .*expected \$enddefinitions/],
      [[file('bad-time.vcd'), '--clock', 'clk', '--data', 'tx'], /at line 10 .*expected #<decimal time>.*--lenient/],
    ];
    const results = await Promise.all(cases.map(([args]) => run(args)));
    results.forEach((r, i) => {
      expect(r.code, cases[i][0].join(' ')).toBe(2);
      expect(r.stderr).toMatch(cases[i][1]);
      expect(r.stderr.trim().split('\n')).toHaveLength(1);
      expect(r.stderr).not.toMatch(/\n\s+at /);
    });
  });

  it('decodes past a malformed line with --lenient and lists it as a warning', async () => {
    const r = await run([file('bad-time.vcd'), '--clock', 'clk', '--data', 'tx', '--lenient']);
    expect(r.code).toBe(0);
    expect(r.stderr).toMatch(/warning at line 10 .*"#1x2" is not a time/);
  });

  it('decodes past a time going back with --lenient and lists it as a warning', async () => {
    const r = await run([file('back-time.vcd'), '--clock', 'clk', '--data', 'tx', '--lenient']);
    expect(r.code).toBe(0);
    expect(r.stderr).toMatch(/warning at line 9 .*Time goes back/);
  });

  it('stops quietly when the reader of its output goes away', async () => {
    const r = await run([file('many.bin'), '--format', 'raw', '--sample-rate', '10M', '--channels', 'clk,tx', '--clock', 'clk', '--data', 'tx'], '| head -n 2');
    expect(r.code).toBe(0);
    expect(r.stdout.trim().split('\n')).toHaveLength(2);
    expect(r.stderr).not.toMatch(/EPIPE|Error/);
  });
});
