// The decode CLI with settings left out: the settings finder fills them in.
import { spawn } from 'node:child_process';
import { mkdtempSync, readFileSync, rmSync, writeFileSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { afterAll, describe, expect, it } from 'vitest';
import { encodeLineBits, randomFrame, seededRng, renderWaveform, rawBytes } from '../../shared/decoder/encode';
import { decodeCli } from './cli-command';

function run(args: string[]): Promise<{ code: number | null; stdout: string; stderr: string }> {
  return new Promise((resolve) => {
    const child = spawn(process.execPath, [decodeCli, ...args]);
    let stdout = '';
    let stderr = '';
    child.stdout.on('data', (d) => (stdout += d));
    child.stderr.on('data', (d) => (stderr += d));
    child.on('close', (code) => resolve({ code, stdout, stderr }));
  });
}

interface Entry {
  file: string;
  cli: string;
  expected: { frames: Record<string, Record<string, number>> };
}
const manifest = JSON.parse(readFileSync('samples/manifest.json', 'utf8')) as { captures: Entry[] };
const sample = (name: string) => manifest.captures.find((c) => c.file === name)!;
const total = (e: Entry) => Object.values(e.expected.frames).reduce((n, c) => n + (c.ok ?? 0) + (c['bad-fcs'] ?? 0), 0);
const byStatus = (stdout: string) => {
  const out: Record<string, number> = {};
  for (const l of stdout.trim().split('\n').filter(Boolean)) {
    const f = JSON.parse(l) as { status: string };
    out[f.status] = (out[f.status] ?? 0) + 1;
  }
  return out;
};

const dir = mkdtempSync(join(tmpdir(), 'flagline-finder-cli-'));
afterAll(() => rmSync(dir, { recursive: true, force: true }));

describe('decode CLI with settings left out', () => {
  it('finds the clock-free NRZI setting of a raw capture given only its sample rate, and decodes what the full settings decode', async () => {
    const e = sample('wrenfield-treasurer-update.raw');
    const r = await run([`samples/${e.file}`, '--sample-rate', '8M']);
    expect(r.code, r.stderr).toBe(0);
    const lines = r.stderr.split('\n');
    expect(lines[0]).toMatch(/^decode: settings found: NRZI, no clock, 79\d \d00 bit\/s ± [\d.]+ % \(from data edges\), either polarity, FCS-16: [\d ]+ frames, [\d ]+ good/);
    expect(lines[1]).toMatch(/^decode: runner-up: .*FCS-32: [\d ]+ frames, 0 good/);
    const want = Object.values(e.expected.frames).reduce((n, c) => n + c.ok, 0);
    expect(byStatus(r.stdout).ok).toBe(want);
    expect(r.stdout.trim().split('\n')).toHaveLength(total(e));
  });

  it('prints the whole ranking, the link directions and the stations with --explain', async () => {
    const e = sample('wrenfield-registry-rxd.octets');
    const r = await run([`samples/${e.file}`, '--bit-rate', '800k', '--explain']);
    expect(r.code, r.stderr).toBe(0);
    // detection reads the file as line octets from its flags once NRZI-decoded, so no other format is tried
    expect(r.stderr).toMatch(/\n {2}format: octets\n/);
    expect(r.stderr).toMatch(/decode: ranking, best first:\n {3}1\. NRZI, either polarity, FCS-16: \d+ frames, \d+ good/);
    expect(r.stderr).toMatch(/\n {3}2\. /);
    expect(r.stderr).toMatch(/line: from-server, station 0x21 — /);
    expect(r.stderr).toMatch(/0x21: \d+ frames \(line \d+\)/);
    expect(r.stdout.trim().split('\n')).toHaveLength(total(e));
  });

  it('keeps the defaults and runs no finder with --settings given', async () => {
    const e = sample('wrenfield-registry-rxd.octets');
    const r = await run([`samples/${e.file}`, '--format', 'octets', '--bit-rate', '800k', '--settings', 'given']);
    expect(r.code).toBe(0);
    expect(r.stderr).not.toMatch(/settings found/);
    // the default NRZ reads this NRZI line as no good frame at all
    expect(byStatus(r.stdout).ok ?? 0).toBe(0);
  });

  it('says what it tried and what to check when no setting decodes a good frame', async () => {
    const rng = seededRng(3);
    const bits = encodeLineBits(Array.from({ length: 40 }, () => ({ kind: 'frame' as const, bytes: randomFrame(rng, 30), faults: { wrongFcs: true } }))).bits;
    const w = renderWaveform({ links: [{ name: 'a', bits }], samplesPerBit: 8, samplePeriodSeconds: 1 / 8e6, encoding: 'nrz' });
    const file = join(dir, 'no-good.bin');
    writeFileSync(file, rawBytes(w));
    const r = await run([file, '--sample-rate', '8M', '--channels', 'rx', '--bit-rate', '1M']);
    expect(r.code).toBe(0);
    expect(r.stderr).toMatch(/the settings finder: No setting decoded a frame with a good FCS/);
    expect(r.stderr).toMatch(/Flags were found/);
    expect(r.stderr).toMatch(/tried: format: raw; .*line coding: NRZ, NRZ inverted, NRZI; FCS: FCS-16/);
    expect(r.stderr).toMatch(/caution: .*±12 V/);
  });
});
