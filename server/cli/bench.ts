// `npm run bench`: decoder throughput. Captures are generated in memory by our own encoder, so
// the numbers cover only decoding. Targets are printed beside the measured numbers, not asserted.
//   npm run bench                     in-memory stages (about a minute)
//   npm run bench -- --cli-mb 400     also writes a raw capture of that size to a temp dir and
//                                     times `decode` on it, with its peak RSS
import { spawn } from 'node:child_process';
import { mkdtempSync, openSync, rmSync, writeSync, closeSync, readFileSync } from 'node:fs';
import { loadavg, tmpdir } from 'node:os';
import { join } from 'node:path';
import { parseArgs } from 'node:util';
import { checkFrame } from '../../shared/decoder/check';
import { Deframer } from '../../shared/decoder/deframe';
import { encodeLineBits, randomFrame, seededRng, type LineItem } from '../../shared/decoder/encode/line-bits';
import { renderWaveform, type Waveform } from '../../shared/decoder/encode/waveform';
import { collect } from '../../shared/decoder/encode/writers/collect';
import { rawChunks } from '../../shared/decoder/encode/writers/raw';
import { vcdChunks } from '../../shared/decoder/encode/writers/vcd';
import { createDecoder } from '../../shared/decoder/pipeline';

const mb = (bytes: number) => bytes / 1e6;
const fmt = (n: number, digits = 1) => n.toFixed(digits);
const peakRssMb = () => process.resourceUsage().maxRSS / 1024;

function report(stage: string, measured: string, target: string): void {
  process.stdout.write(`${stage.padEnd(42)} ${measured.padEnd(58)} target ${target}\n`);
}

/** Line bits of a busy link: random frames separated by a few fill flags. */
function busyLink(seed: number, bitsWanted: number): Uint8Array {
  const rng = seededRng(seed);
  const items: LineItem[] = [];
  let approx = 0;
  while (approx < bitsWanted) {
    const bytes = randomFrame(rng, 140);
    items.push({ kind: 'frame', bytes });
    items.push({ kind: 'flags', count: 1 + Math.floor(rng() * 3) });
    approx += (bytes.length + 2) * 8 * 1.05 + 24;
  }
  return encodeLineBits(items).bits;
}

/** Wall-clock seconds and CPU seconds of this process (the machine may be shared; CPU time shows the decoder's own cost). */
let lastCpu = 0;
function timeIt(fn: () => void): number {
  const t0 = performance.now();
  const c0 = process.cpuUsage();
  fn();
  const c = process.cpuUsage(c0);
  lastCpu = (c.user + c.system) / 1e6;
  return (performance.now() - t0) / 1000;
}
const perCpu = (amount: number) => `${fmt(amount / lastCpu / 1e6)} per CPU-s`;

function benchDeframe(): void {
  const bits = busyLink(1, 20_000_000);
  const samples = new Float64Array(bits.length);
  for (let i = 0; i < samples.length; i++) samples[i] = i;
  const run = (check: boolean) => {
    let frames = 0;
    const d = new Deframer('a', { frame: (f) => { frames++; if (check) checkFrame(f); }, event: () => {} });
    const step = 1 << 16;
    for (let at = 0; at < bits.length; at += step) {
      const end = Math.min(bits.length, at + step);
      d.push({ bits: bits.subarray(at, end), samples: samples.subarray(at, end), n: end - at });
    }
    d.finish();
    return frames;
  };
  run(false); // warm-up
  let frames = 0;
  const secs = timeIt(() => (frames = run(false)));
  report('deframing alone', `${fmt(bits.length / secs / 1e6)} Mbit/s (${perCpu(bits.length)}; ${frames} frames)`, '≥ 100 Mbit/s');
  const secs2 = timeIt(() => run(true));
  report('deframing + FCS + link decode', `${fmt(bits.length / secs2 / 1e6)} Mbit/s (${perCpu(bits.length)})`, '—');
}

function clockedWaveform(bitsPerLink: number, samplesPerBit: number): Waveform {
  return renderWaveform({
    links: [
      { name: 'a', bits: busyLink(2, bitsPerLink) },
      { name: 'b', bits: busyLink(3, bitsPerLink) },
    ],
    samplesPerBit,
    samplePeriodSeconds: 1 / (800_000 * samplesPerBit),
    encoding: 'nrz',
    clock: { name: 'clk', edge: 'rising' },
  });
}

function decodeInMemory(chunks: Uint8Array[], format: 'raw' | 'vcd', sampleRate: number): { secs: number; frames: number; bad: number } {
  let frames = 0;
  let bad = 0;
  const dec = createDecoder(
    { format, sampleRate, channelNames: format === 'raw' ? ['clk', 'a', 'b'] : undefined, clock: 'clk', data: ['a', 'b'] },
    { frame: (f) => { frames++; if (f.status !== 'ok') bad++; }, event: () => {} },
  );
  const secs = timeIt(() => {
    for (const c of chunks) dec.push(c);
    dec.finish();
  });
  const fatal = dec.fatal();
  if (fatal) throw new Error(`bench capture did not decode: ${fatal.message}`);
  return { secs, frames, bad };
}

function benchRaw(): void {
  const spb = 5;
  const w = clockedWaveform(4_000_000, spb);
  const chunks = [...rawChunks(w, { chunkSize: 1 << 20 })].map((c) => c.slice());
  const bytes = chunks.reduce((a, c) => a + c.length, 0);
  decodeInMemory(chunks.slice(0, 8), 'raw', 800_000 * spb); // warm-up
  const { secs, frames, bad } = decodeInMemory(chunks, 'raw', 800_000 * spb);
  report(
    'raw binary, clocked, 2 links, end to end',
    `${fmt(bytes / secs / 1e6)} M samples/s (${perCpu(bytes)}; ${frames} frames, ${bad} not ok)`,
    '≥ 150 M samples/s',
  );
}

function benchVcd(): void {
  const spb = 5;
  const w = clockedWaveform(500_000, spb);
  const text = collect(vcdChunks(w, { timescale: '1 ns' }));
  const chunks: Uint8Array[] = [];
  for (let at = 0; at < text.length; at += 1 << 20) chunks.push(text.subarray(at, Math.min(text.length, at + (1 << 20))));
  decodeInMemory(chunks.slice(0, 4), 'vcd', 0); // warm-up
  const { secs, frames, bad } = decodeInMemory(chunks, 'vcd', 0);
  report('VCD, clocked, 2 links, end to end', `${fmt(mb(text.length) / secs)} MB/s (${perCpu(text.length)}; ${frames} frames, ${bad} not ok)`, '≥ 100 MB/s');
}

/** Writes a raw capture of about `sizeMb` MB by repeating one generated block, then times the CLI on it. */
async function benchCli(sizeMb: number): Promise<void> {
  const spb = 5;
  const block = collect(rawChunks(clockedWaveform(1_600_000, spb), { chunkSize: 1 << 22 }));
  const dir = mkdtempSync(join(tmpdir(), 'flagline-bench-'));
  const file = join(dir, 'capture.bin');
  try {
    const fd = openSync(file, 'w');
    let written = 0;
    while (written < sizeMb * 1e6) {
      writeSync(fd, block);
      written += block.length;
    }
    closeSync(fd);
    const args = ['--import', 'tsx', 'server/cli/decode.ts', file, '--format', 'raw', '--sample-rate', String(800_000 * spb), '--channels', 'clk,a,b', '--clock', 'clk', '--data', 'a,b'];
    const t0 = performance.now();
    const { code, peakKb, lines } = await runMeasured(process.execPath, args);
    const secs = (performance.now() - t0) / 1000;
    if (code !== 0) throw new Error(`decode exited with ${code}`);
    report(
      `CLI decode of a ${fmt(mb(written), 0)} MB raw file`,
      `${fmt(mb(written) / secs)} MB/s, ${lines} frames, peak RSS ${fmt(peakKb / 1024, 0)} MB`,
      'stream: 1 GB raw under 300 MB RSS',
    );
  } finally {
    rmSync(dir, { recursive: true, force: true });
  }
}

/** Runs a child, counts its stdout lines, and samples its peak RSS (VmHWM) from /proc while it runs. */
function runMeasured(cmd: string, args: string[]): Promise<{ code: number | null; peakKb: number; lines: number }> {
  return new Promise((resolve) => {
    const child = spawn(cmd, args, { stdio: ['ignore', 'pipe', 'inherit'] });
    let peakKb = 0;
    let lines = 0;
    const sample = () => {
      try {
        const m = /VmHWM:\s+(\d+)/.exec(readFileSync(`/proc/${child.pid}/status`, 'utf8'));
        if (m) peakKb = Math.max(peakKb, Number(m[1]));
      } catch {
        // the child has just exited
      }
    };
    const timer = setInterval(sample, 50);
    child.stdout.on('data', (d: Buffer) => {
      for (let i = 0; i < d.length; i++) if (d[i] === 10) lines++;
      sample();
    });
    child.on('close', (code) => {
      clearInterval(timer);
      resolve({ code, peakKb, lines });
    });
  });
}

async function main(): Promise<void> {
  const { values } = parseArgs({ options: { 'cli-mb': { type: 'string' } }, strict: true });
  process.stdout.write(`Flagline decoder benchmarks (node ${process.version}; load average ${loadavg().map((l) => l.toFixed(1)).join(' ')})\n`);
  benchDeframe();
  benchRaw();
  benchVcd();
  report('peak RSS of this process', `${fmt(peakRssMb(), 0)} MB`, '—');
  if (values['cli-mb'] !== undefined) {
    const size = Number(values['cli-mb']);
    if (!(size > 0)) throw new Error('--cli-mb needs a size in MB');
    await benchCli(size);
  }
}

main().catch((e) => {
  process.stderr.write(`bench: ${(e as Error).message}\n`);
  process.exit(1);
});
