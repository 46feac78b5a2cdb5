// `npm run bench`: decoder throughput. Captures are generated in memory by our own encoder, so
// the numbers cover only decoding. Targets are printed beside the measured numbers, not asserted.
//   npm run bench                     in-memory stages, the settings finder and field hints
//                                     (bench-discovery.ts; under two minutes)
//   npm run bench -- --general        also the raw capture through the general (transitions) path
//   npm run bench -- --cli-mb 400     also writes a raw capture of that size to a temp dir, times
//                                     `decode` on it with its peak RSS, and the C reference
//                                     (bench/reference.c, built with cc -O2) on the same file
//   npm run bench -- --cli-mb 1024    the memory target: 1 GB raw under 300 MB RSS
//   npm run bench -- --cli-mb 400 --cli-only   only the CLI and C reference rows
//   npm run bench -- --timing         only the service statistics (1 M frames) and schedule window rows
import { spawn, spawnSync } from 'node:child_process';
import { mkdtempSync, openSync, rmSync, writeSync, closeSync, readFileSync } from 'node:fs';
import { cpus, loadavg, tmpdir } from 'node:os';
import { join } from 'node:path';
import { parseArgs } from 'node:util';
import { checkFrame } from '../../shared/decoder/check';
import { Deframer } from '../../shared/decoder/deframe';
import { requestInfo, responseInfo } from '../../shared/decoder/encode/calls';
import { planEpisode, type EpisodeStation } from '../../shared/decoder/encode/episodes';
import { encodeLineBits, randomFrame, seededRng, type LineItem } from '../../shared/decoder/encode/line-bits';
import { renderWaveform, type Waveform } from '../../shared/decoder/encode/waveform';
import { collect } from '../../shared/decoder/encode/writers/collect';
import { rawChunks } from '../../shared/decoder/encode/writers/raw';
import { vcdChunks } from '../../shared/decoder/encode/writers/vcd';
import { createDecoder } from '../../shared/decoder/pipeline';
import { LineTiming, scheduleWindow, type TimingExchange, type TimingFrame } from '../../shared/decoder/timing';
import { benchDiscovery } from './bench-discovery';

const mb = (bytes: number) => bytes / 1e6;
const fmt = (n: number, digits = 1) => n.toFixed(digits);
const peakRssMb = () => process.resourceUsage().maxRSS / 1024;

/** Real captures: 8 MHz sampling of an 800 kbit/s link, 10 samples per bit; 5 per bit is the sparse case. */
const BIT_RATE = 800_000;
const DENSE = 10;
const SPARSE = 5;

interface Row {
  stage: string;
  mbPerS?: number;
  mSamplesPerS?: number;
  mbitPerS?: number;
  /** the row's main rate per CPU-second of this process (the machine may be shared) */
  perCpu?: string;
  rssMb: number;
  target: string;
  note?: string;
}
const rows: Row[] = [];

const COLUMNS: [string, number][] = [
  ['stage', 50],
  ['MB/s', 8],
  ['M samples/s', 12],
  ['Mbit/s', 8],
  ['per CPU-s', 16],
  ['peak RSS', 9],
  ['target', 30],
];

function printHeader(): void {
  process.stdout.write(COLUMNS.map(([t, w]) => t.padEnd(w)).join(' ') + '\n');
}

function report(row: Row): void {
  rows.push(row);
  const num = (n: number | undefined) => (n === undefined ? '—' : fmt(n));
  const cells = [row.stage, num(row.mbPerS), num(row.mSamplesPerS), num(row.mbitPerS), row.perCpu ?? '—', `${fmt(row.rssMb, 0)} MB`, row.target];
  process.stdout.write(cells.map((c, k) => c.padEnd(COLUMNS[k][1])).join(' ') + (row.note ? `  ${row.note}` : '') + '\n');
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
const perCpu = (amount: number, unit: string) => `${fmt(amount / lastCpu / 1e6)} ${unit}`;

/** The best of a few runs: on a shared machine the fastest run is the one least disturbed. */
function best(runs: number, fn: () => void): { secs: number; cpu: number } {
  let secs = Infinity;
  let cpu = Infinity;
  for (let k = 0; k < runs; k++) {
    const s = timeIt(fn);
    if (s < secs) secs = s;
    if (lastCpu < cpu) cpu = lastCpu;
  }
  lastCpu = cpu;
  return { secs, cpu };
}

function pack(bits: Uint8Array): Uint8Array {
  const out = new Uint8Array((bits.length + 7) >> 3);
  for (let i = 0; i < bits.length; i++) out[i >> 3] |= bits[i] << (i & 7);
  return out;
}

function benchDeframe(): void {
  const bits = busyLink(1, 20_000_000);
  const packed = pack(bits);
  const samples = new Float64Array(bits.length);
  for (let i = 0; i < samples.length; i++) samples[i] = i;
  const run = (check: boolean, packedForm: boolean) => {
    let frames = 0;
    const d = new Deframer('a', { frame: (f) => { frames++; if (check) checkFrame(f); }, event: () => {} });
    const step = 1 << 13;
    for (let at = 0; at < bits.length; at += step) {
      const end = Math.min(bits.length, at + step);
      d.push(
        packedForm
          ? { bits: bits.subarray(0, 0), packed: packed.subarray(at >> 3, (end + 7) >> 3), samples: samples.subarray(at, end), n: end - at }
          : { bits: bits.subarray(at, end), samples: samples.subarray(at, end), n: end - at },
      );
    }
    d.finish();
    return frames;
  };
  for (let k = 0; k < 2; k++) {
    run(false, true); // warm-up
    run(false, false);
    run(true, true);
  }
  let frames = 0;
  const { secs } = best(3, () => (frames = run(false, true)));
  report({ stage: 'deframing alone, packed line bits', mbitPerS: bits.length / secs / 1e6, perCpu: perCpu(bits.length, 'Mbit'), rssMb: peakRssMb(), target: '≥ 100 Mbit/s', note: `${frames} frames` });
  const one = best(3, () => run(false, false));
  report({ stage: 'deframing alone, one bit per byte', mbitPerS: bits.length / one.secs / 1e6, perCpu: perCpu(bits.length, 'Mbit'), rssMb: peakRssMb(), target: '≥ 100 Mbit/s' });
  const checked = best(3, () => run(true, true));
  report({ stage: 'deframing + FCS + link decode, packed', mbitPerS: bits.length / checked.secs / 1e6, perCpu: perCpu(bits.length, 'Mbit'), rssMb: peakRssMb(), target: '—' });
}

function clockedWaveform(bitsPerLink: number, samplesPerBit: number): Waveform {
  return renderWaveform({
    links: [
      { name: 'a', bits: busyLink(2, bitsPerLink) },
      { name: 'b', bits: busyLink(3, bitsPerLink) },
    ],
    samplesPerBit,
    samplePeriodSeconds: 1 / (BIT_RATE * samplesPerBit),
    encoding: 'nrz',
    clock: { name: 'clk', edge: 'rising' },
  });
}

function decodeInMemory(chunks: Uint8Array[], format: 'raw' | 'vcd', sampleRate: number, rawFastPath = true): { frames: number; bad: number } {
  let frames = 0;
  let bad = 0;
  const dec = createDecoder(
    { format, sampleRate, channelNames: format === 'raw' ? ['clk', 'a', 'b'] : undefined, clock: 'clk', data: ['a', 'b'], rawFastPath },
    { frame: (f) => { frames++; if (f.status !== 'ok') bad++; }, event: () => {} },
  );
  for (const c of chunks) dec.push(c);
  dec.finish();
  const fatal = dec.fatal();
  if (fatal) throw new Error(`bench capture did not decode: ${fatal.message}`);
  return { frames, bad };
}

function benchRaw(spb: number, rawFastPath = true): void {
  const w = clockedWaveform((spb >= 10 ? 2_000_000 : 4_000_000) * (rawFastPath ? 1 : 0.25), spb);
  const chunks = [...rawChunks(w, { chunkSize: 1 << 20 })].map((c) => c.slice());
  const bytes = chunks.reduce((a, c) => a + c.length, 0);
  // warm-up: the optimizing compiler needs a few full passes before the hot loops settle
  for (let k = 0; k < 2; k++) decodeInMemory(chunks, 'raw', BIT_RATE * spb, rawFastPath);
  let result = { frames: 0, bad: 0 };
  const { secs } = best(3, () => (result = decodeInMemory(chunks, 'raw', BIT_RATE * spb, rawFastPath)));
  const bits = (bytes / spb) * 2;
  report({
    stage: `raw clocked, 2 links, ${spb} samples/bit${rawFastPath ? '' : ', general path'}`,
    mbPerS: mb(bytes) / secs,
    mSamplesPerS: bytes / secs / 1e6,
    mbitPerS: bits / secs / 1e6,
    perCpu: perCpu(bytes, 'M samples'),
    rssMb: peakRssMb(),
    target: rawFastPath ? '≥ 150 M samples/s' : '—',
    note: `${result.frames} frames, ${result.bad} not ok`,
  });
}

function benchVcd(spb: number): void {
  const w = clockedWaveform(spb >= 10 ? 250_000 : 500_000, spb);
  const text = collect(vcdChunks(w, { timescale: '1 ns' }));
  const chunks: Uint8Array[] = [];
  for (let at = 0; at < text.length; at += 1 << 20) chunks.push(text.subarray(at, Math.min(text.length, at + (1 << 20))));
  for (let k = 0; k < 2; k++) decodeInMemory(chunks, 'vcd', 0); // warm-up
  let result = { frames: 0, bad: 0 };
  const { secs } = best(3, () => (result = decodeInMemory(chunks, 'vcd', 0)));
  report({
    stage: `VCD clocked, 2 links, ${spb} samples/bit`,
    mbPerS: mb(text.length) / secs,
    mbitPerS: (w.totalSamples / spb) * 2 / secs / 1e6,
    perCpu: perCpu(text.length, 'MB'),
    rssMb: peakRssMb(),
    target: '≥ 100 MB/s',
    note: `${result.frames} frames, ${result.bad} not ok`,
  });
}

const KINDS = ['I', 'S', 'U'] as const;

/** The bench's round-robin episode as columns (the plan itself is dropped before timing starts). */
function serviceStatsInput() {
  const record = new Uint8Array(128).fill(0x41);
  const request = requestInfo(20, 1, 0, { fcb: { name: 'BENCH.DAT' } });
  const response = responseInfo(20, 1, 0, { fcb: { name: 'BENCH.DAT' }, record });
  const stations: EpisodeStation[] = Array.from({ length: 8 }, (_, k) => ({
    address: 0x20 + k,
    port: `p${k}`,
    calls: Array.from({ length: 31_500 }, (_, i) => ({ at: i * 0.004 + k * 0.0003, request, response, serverDelay: 0.0003 })),
  }));
  const plan = planEpisode({ bitRate: BIT_RATE, wiring: 'per-port', stations, skips: [{ station: 0x23, rounds: 3, after: 1 }] });
  const all = plan.lines.flatMap((line) => line.frames.map((f) => ({ f, fromServer: line.direction === 'from-server' }))).sort((a, b) => a.f.startBit - b.f.startBit);
  const n = all.length;
  const frames = { first: new Float64Array(n), last: new Float64Array(n), station: new Int32Array(n), fromServer: new Uint8Array(n), abort: new Uint8Array(n), kind: new Uint8Array(n), pf: new Uint8Array(n) };
  all.forEach(({ f, fromServer }, i) => {
    frames.first[i] = f.startBit;
    frames.last[i] = f.endBit - 1;
    frames.station[i] = f.station;
    frames.fromServer[i] = fromServer ? 1 : 0;
    frames.abort[i] = f.status === 'abort' ? 1 : 0;
    frames.kind[i] = KINDS.indexOf(f.kind);
    frames.pf[i] = (f.bytes[1] & 0x10) !== 0 ? 1 : 0;
  });
  const edges = plan.rts.flatMap((r) => r.edges.map((e) => ({ station: r.station, rising: e.level === 1, at: e.bit }))).sort((a, b) => a.at - b.at);
  const exchanges: TimingExchange[] = plan.exchanges.map((e, i) => ({ station: e.station, first: e.firstBit, end: e.lastBit, outcome: e.outcome, rttSeconds: e.delaySeconds, id: i }));
  return { frames, edges, exchanges };
}

/**
 * Service statistics (visits, rounds, waits, skips, per-station figures) and the schedule's lanes
 * for about a million frames: a round-robin server with 8 stations on their own ports, every one
 * asking all the time, planned by the episode encoder (frames placed, no waveform). The frames,
 * request-line edges and exchanges are made before the clock starts, in the order the decoder and
 * call layer give them; only the timing stage is timed.
 */
function benchServiceStats(): void {
  const input = serviceStatsInput();
  const { frames, edges, exchanges } = input;
  const n = frames.first.length;
  const run = () => {
    const lt = new LineTiming({ secondsPerUnit: 1 / BIT_RATE });
    // one frame object refilled: the stage keeps nothing of it, as with the decoder's short-lived frames
    const f: TimingFrame = { station: 0, direction: 'to-server', first: 0, last: 0, status: 'ok', kind: 'I', pf: false, id: 0 };
    for (let i = 0; i < n; i++) {
      f.station = frames.station[i];
      f.direction = frames.fromServer[i] ? 'from-server' : 'to-server';
      f.first = frames.first[i];
      f.last = frames.last[i];
      f.status = frames.abort[i] ? 'abort' : 'ok';
      f.kind = KINDS[frames.kind[i]];
      f.pf = frames.pf[i] === 1;
      f.id = i;
      lt.frame(f);
    }
    for (const e of edges) lt.requestLine(e.station, e.rising, e.at);
    for (const x of exchanges) lt.exchange(x);
    return lt.finish();
  };
  run(); // warm-up
  let result = run();
  const { secs, cpu } = best(3, () => (result = run()));
  const s = result.service;
  report({
    stage: `service statistics, ${fmt(n / 1e6, 2)} M frames, 8 stations`,
    perCpu: `${fmt(n / cpu / 1e6, 2)} M frames`,
    rssMb: peakRssMb(),
    target: '1 M frames ≤ 5 s',
    note: `${fmt(secs, 2)} s wall, ${fmt(cpu, 2)} CPU-s (${fmt((cpu * 1e6) / n, 2)} CPU-s per 1 M frames); ${s.server.visits} visits, ${s.server.rounds} rounds, ${s.skipped.length} skipped, ${s.starved.length} starved`,
  });
  const sched = result.schedule;
  const w = best(3, () => scheduleWindow(sched, { from: sched.from, to: sched.to, width: 1600 }));
  report({
    stage: `schedule window of the whole capture, 1600 px`,
    rssMb: peakRssMb(),
    target: '—',
    note: `${fmt(w.secs * 1000, 1)} ms wall, ${fmt(w.cpu * 1000, 1)} CPU-ms for ${exchanges.length} exchanges and ${n} frames in ${sched.lanes.length} lanes`,
  });
}

/** Compiles bench/reference.c with `cc -O2` into `dir`; null when there is no C compiler. */
function compileReference(dir: string): string | null {
  const out = join(dir, 'reference');
  const r = spawnSync('cc', ['-O2', '-o', out, join(process.cwd(), 'bench', 'reference.c')], { stdio: ['ignore', 'ignore', 'inherit'] });
  if (r.error || r.status !== 0) return null;
  return out;
}

/** Writes a raw capture of about `sizeMb` MB by repeating one generated block, then times the CLI on it. */
async function benchCli(sizeMb: number): Promise<void> {
  const spb = DENSE;
  const block = collect(rawChunks(clockedWaveform(800_000, spb), { chunkSize: 1 << 22 }));
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
    const args = ['--import', 'tsx', 'server/cli/decode.ts', file, '--format', 'raw', '--sample-rate', String(BIT_RATE * spb), '--channels', 'clk,a,b', '--clock', 'clk', '--data', 'a,b'];
    const t0 = performance.now();
    const { code, peakKb, lines, cpuSecs } = await runMeasured(process.execPath, args);
    const secs = (performance.now() - t0) / 1000;
    if (code !== 0) throw new Error(`decode exited with ${code}`);
    report({
      stage: `CLI decode of a ${fmt(mb(written), 0)} MB raw file, ${spb} samples/bit`,
      mbPerS: mb(written) / secs,
      mSamplesPerS: written / secs / 1e6,
      mbitPerS: (written / spb) * 2 / secs / 1e6,
      perCpu: `${fmt(written / cpuSecs / 1e6)} M samples`,
      rssMb: peakKb / 1024,
      target: 'RSS < 300 MB (1 GB raw)',
      note: `${lines} frames; ${fmt(secs, 2)} s wall, ${fmt(cpuSecs, 2)} CPU-s (with node start-up)`,
    });
    const reference = compileReference(dir);
    if (!reference) {
      process.stdout.write('C reference: no C compiler (cc) here, ratio not measured\n');
      return;
    }
    const c0 = performance.now();
    const r = await runMeasured(reference, [file, '0', 'rising', '1', '2']);
    const cSecs = (performance.now() - c0) / 1000;
    if (r.code !== 0) throw new Error(`reference exited with ${r.code}`);
    report({
      stage: 'C reference (bench/reference.c, cc -O2)',
      mbPerS: mb(written) / cSecs,
      mSamplesPerS: written / cSecs / 1e6,
      mbitPerS: (written / spb) * 2 / cSecs / 1e6,
      perCpu: `${fmt(written / Math.max(r.cpuSecs, 0.01) / 1e6)} M samples`,
      rssMb: r.peakKb / 1024,
      target: '—',
      note: `${r.out.trim()}; ${fmt(cSecs, 2)} s wall, ${fmt(r.cpuSecs, 2)} CPU-s`,
    });
    process.stdout.write(
      `CLI / C reference: ${fmt(secs / cSecs, 2)}× wall time, ${fmt(cpuSecs / Math.max(r.cpuSecs, 0.01), 2)}× CPU time   (target ≤ 3×; on a shared machine the CPU-time ratio is the steadier one)\n`,
    );
  } finally {
    rmSync(dir, { recursive: true, force: true });
  }
}

/** clock ticks per second of /proc/<pid>/stat times (USER_HZ, 100 on Linux) */
const TICKS = 100;

/**
 * Runs a child, counts its stdout lines, and samples its peak RSS (VmHWM) and CPU time
 * (utime + stime) from /proc while it runs; the CPU time misses at most the last 20 ms.
 */
function runMeasured(cmd: string, args: string[], stderr: 'inherit' | 'ignore' = 'inherit'): Promise<{ code: number | null; peakKb: number; lines: number; cpuSecs: number; out: string }> {
  return new Promise((resolve) => {
    const child = spawn(cmd, args, { stdio: ['ignore', 'pipe', stderr] });
    let peakKb = 0;
    let lines = 0;
    let cpuSecs = 0;
    let out = '';
    const sample = () => {
      try {
        const m = /VmHWM:\s+(\d+)/.exec(readFileSync(`/proc/${child.pid}/status`, 'utf8'));
        if (m) peakKb = Math.max(peakKb, Number(m[1]));
        // fields after the command name: state is field 3, utime 14, stime 15
        const stat = readFileSync(`/proc/${child.pid}/stat`, 'utf8');
        const f = stat.slice(stat.lastIndexOf(')') + 2).split(' ');
        cpuSecs = Math.max(cpuSecs, (Number(f[11]) + Number(f[12])) / TICKS);
      } catch {
        // the child has just exited
      }
    };
    const timer = setInterval(sample, 20);
    child.stdout.on('data', (d: Buffer) => {
      for (let i = 0; i < d.length; i++) if (d[i] === 10) lines++;
      if (out.length < 4096) out += d.toString('utf8');
      sample();
    });
    child.on('close', (code) => {
      clearInterval(timer);
      resolve({ code, peakKb, lines, cpuSecs, out });
    });
  });
}

async function main(): Promise<void> {
  const { values } = parseArgs({ options: { 'cli-mb': { type: 'string' }, 'cli-only': { type: 'boolean' }, general: { type: 'boolean' }, timing: { type: 'boolean' } }, strict: true });
  process.stdout.write(`Flagline decoder benchmarks (node ${process.version}; load average ${loadavg().map((l) => l.toFixed(1)).join(' ')}; ${cpus().length} CPUs)\n`);
  process.stdout.write(`Sample density: ${BIT_RATE / 1000} kbit/s links sampled at ${(BIT_RATE * DENSE) / 1e6} MHz (${DENSE} samples/bit, as real captures), and at ${SPARSE} samples/bit.\n`);
  process.stdout.write('Rates are wall-clock, best of a few runs; "per CPU-s" is the same work per CPU-second of this process.\n');
  process.stdout.write('Peak RSS of the in-memory stages includes the captures the bench generates; the CLI row is the decoder streaming a file.\n\n');
  printHeader();
  if (values.timing) benchServiceStats();
  else if (!values['cli-only']) {
    benchDeframe();
    benchRaw(DENSE);
    benchRaw(SPARSE);
    if (values.general) benchRaw(SPARSE, false);
    benchVcd(DENSE);
    benchVcd(SPARSE);
    benchServiceStats();
    for (const r of await benchDiscovery()) report({ stage: r.stage, mbPerS: r.mbPerS, rssMb: peakRssMb(), target: r.target, note: r.note });
  }
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
