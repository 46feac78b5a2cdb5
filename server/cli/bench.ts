// `npm run bench`: decoder throughput. Captures are generated in memory by our own encoder, so
// the numbers cover only decoding. Targets are printed beside the measured numbers, not asserted.
//   npm run bench                     in-memory stages, the settings finder and field hints
//                                     (bench-discovery.ts; under two minutes)
//   npm run bench -- --general        also the raw capture through the general (transitions) path
//                                     (with --cli-mb: the decoder with the anomaly tap through it too)
//   npm run bench -- --cli-mb 400     also writes a raw capture of that size to a temp dir and times
//                                     on it, side by side: the C reference (bench/reference.c, built
//                                     with cc -O2), the decode CLI end to end (bundled into one JS
//                                     file, and through npm run), each decoder stage in a fresh process,
//                                     and the decoder with the fault desk's anomaly tap
//   npm run bench -- --cli-mb 1024    the same with the memory target: 1 GB raw under 300 MB RSS
//   npm run bench -- --cli-mb 400 --cli-only   only the rows on the file
//   npm run bench -- --readers        only each reader alone: MB/s of input per capture format
//   npm run bench -- --memory 1024    only peak RSS on a 1 GB raw capture: the decode CLI, the server's
//                                     decoder with the anomaly tap, and the browser's decode worker in
//                                     Chromium (bench-memory.ts); target under 300 MB
//   npm run bench -- --timing         only the service statistics (1 M frames) and schedule window rows
import { spawn, spawnSync } from 'node:child_process';
import { closeSync, existsSync, mkdtempSync, openSync, readFileSync, readSync, rmSync, writeSync } from 'node:fs';
import { cpus, loadavg, tmpdir } from 'node:os';
import { dirname, join } from 'node:path';
import { fileURLToPath } from 'node:url';
import { parseArgs } from 'node:util';
import { checkFrame, Deframer, createDecoder, ClockedRawBits } from '../../shared/decoder';
import { requestInfo, responseInfo, planEpisode, type EpisodeStation, encodeLineBits, randomFrame, seededRng, type LineItem, renderWaveform, type Waveform, collect, rawChunks, vcdChunks } from '../../shared/decoder/encode';
import { RawReader } from '../../shared/decoder/readers';
import { benchReaders } from './bench-readers';
import { LineTiming, scheduleWindow, type TimingExchange, type TimingFrame } from '../../shared/decoder/timing';
import { captureSettingsSchema } from '../../shared/schemas';
import { benchDiscovery } from './bench-discovery';
import { benchStartup } from './bench-startup';
import { measureBrowserWorker } from './bench-memory';
import { NdjsonWriter } from './ndjson-writer';
import { ensureServerBuild } from './server-build.mjs';

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

/** `entry` (a TypeScript file of this project) bundled with esbuild into one JavaScript file in `dir`, as a compiled entry runs */
async function bundle(entry: string, dir: string, name: string): Promise<string> {
  const { buildSync } = await import('esbuild');
  const out = join(dir, name);
  buildSync({ entryPoints: [join(process.cwd(), entry)], bundle: true, platform: 'node', format: 'esm', outfile: out, external: ['esbuild', 'playwright-core'], logLevel: 'warning' });
  return out;
}

const loadNow = () => loadavg()[0].toFixed(1);

interface Timed {
  secs: number;
  cpuSecs: number;
  frames: number;
  peakKb: number;
  note: string;
}

/**
 * Best (least disturbed) of `runs` runs of a child, by wall time; CPU time is the least of the runs
 * too. The C reference prints its counts, the CLI a line per frame, a stage (--stage) its own timing
 * as JSON, which then replaces the child's (so node's start-up is left out of stage rows).
 */
async function bestChild(runs: number, cmd: string, args: string[]): Promise<Timed> {
  let best: Timed | null = null;
  let cpuSecs = Infinity;
  let peakKb = 0;
  for (let k = 0; k < runs; k++) {
    const t0 = performance.now();
    const r = await runMeasured(cmd, args, 'ignore');
    let secs = (performance.now() - t0) / 1000;
    if (r.code !== 0) throw new Error(`${cmd} ${args[0] ?? ''} exited with ${r.code}`);
    let cpu = r.cpuSecs;
    let frames = r.lines;
    let note = '';
    if (r.out.startsWith('{"stage"')) {
      const own = JSON.parse(r.out) as { secs: number; cpuSecs: number; frames: number };
      ({ secs, cpuSecs: cpu, frames } = own);
    } else if (!r.out.startsWith('{')) {
      note = r.out.trim();
      frames = Number(/(\d+) frames/.exec(note)?.[1] ?? 0);
    }
    cpuSecs = Math.min(cpuSecs, cpu);
    peakKb = Math.max(peakKb, r.peakKb);
    if (!best || secs < best.secs) best = { secs, cpuSecs, frames, peakKb, note };
  }
  return { ...best!, cpuSecs, peakKb };
}

/** Reads `file` through one reused 1 MB buffer into `push` (the CLI's way). */
function readThrough(file: string, push: (bytes: Uint8Array) => void): void {
  const fd = openSync(file, 'r');
  const chunk = new Uint8Array(1 << 20);
  for (;;) {
    const n = readSync(fd, chunk, 0, chunk.length, null);
    if (n === 0) break;
    push(chunk.subarray(0, n));
  }
  closeSync(fd);
}

const STAGES = ['read', 'bits', 'frames', 'ndjson', 'worker', 'tap', 'tap-general'] as const;
type Stage = (typeof STAGES)[number];

/**
 * One stage, once, in this (fresh) process, as the CLI and the app's decode worker run a decode:
 * the optimizing compiler's warm-up included, node's start-up not. Prints its timing as JSON.
 *   read    the file through one reused buffer
 *   bits    + bit recovery (the fused raw path), bits dropped
 *   frames  + deframing, FCS, link decode, time order (createDecoder)
 *   ndjson  + the CLI's NDJSON writer, output dropped
 *   worker  frames as the app's worker takes them (a buffer per frame, line events), no tap
 *   tap     the same with the fault desk's anomaly tap, as the app's worker decodes
 *   tap-general  the same through transitions and bit recovery (the general path, no fused loop)
 */
function runStage(stage: Stage, file: string, spb: number): void {
  const period = 1 / (BIT_RATE * spb);
  const options = { format: 'raw' as const, sampleRate: BIT_RATE * spb, channelNames: ['clk', 'a', 'b'], clock: 'clk', data: ['a', 'b'] };
  let frames = 0;
  const c0 = process.cpuUsage();
  const t0 = performance.now();
  if (stage === 'read') readThrough(file, () => {});
  else if (stage === 'bits') {
    const fused = new ClockedRawBits(
      { samplePeriodSeconds: period, clock: 0, data: [{ channel: 1, link: 'a' }, { channel: 2, link: 'b' }], edge: 'rising', encoding: 'nrz', invert: false },
      { bits: () => {}, event: () => {} },
    );
    const reader = new RawReader(options, { header: () => {}, transitions: () => {}, rawConsumer: () => fused });
    readThrough(file, (b) => reader.push(b));
    reader.finish();
    fused.finish();
  } else {
    const out = new NdjsonWriter(() => {}, 4);
    const write = stage === 'ndjson';
    const tap = stage === 'tap' || stage === 'tap-general';
    const asWorker = tap || stage === 'worker';
    // frames and ndjson as the CLI decodes; worker and the taps as the app's worker (a buffer per frame)
    const dec = createDecoder({ ...options, anomalies: tap ? { anomaly: () => {} } : undefined, rawFastPath: stage !== 'tap-general', sharedFrameBytes: !asWorker, lineEvents: asWorker }, {
      frame: (f) => {
        frames++;
        if (write) out.frame(f, period);
      },
      event: () => {},
    });
    readThrough(file, (b) => {
      dec.push(b);
      out.flush();
    });
    dec.finish();
    out.flush();
  }
  const c = process.cpuUsage(c0);
  process.stdout.write(JSON.stringify({ stage, secs: (performance.now() - t0) / 1000, cpuSecs: (c.user + c.system) / 1e6, frames }) + '\n');
}

/**
 * Writes a raw capture of about `sizeMb` MB by repeating one generated block, then times on it, side
 * by side: the C reference (bench/reference.c), the CLI end to end as built (dist/server/decode.mjs) and through
 * `npm run decode`, each decoder stage added in turn (one fresh process each, as the CLI and the
 * app's worker run), and the decoder with the anomaly tap as the app's worker runs it.
 */
/** A raw capture of about `sizeMb` MB in `dir` (clock + 2 links, DENSE samples/bit), one generated block repeated. */
function writeRawCapture(dir: string, sizeMb: number): { file: string; written: number } {
  const block = collect(rawChunks(clockedWaveform(800_000, DENSE), { chunkSize: 1 << 22 }));
  const file = join(dir, 'capture.bin');
  const fd = openSync(file, 'w');
  let written = 0;
  while (written < sizeMb * 1e6) {
    writeSync(fd, block);
    written += block.length;
  }
  closeSync(fd);
  return { file, written };
}

async function benchCli(sizeMb: number, general: boolean): Promise<void> {
  const spb = DENSE;
  const dir = mkdtempSync(join(tmpdir(), 'flagline-bench-'));
  try {
    const { file, written } = writeRawCapture(dir, sizeMb);
    // every setting given, as the C reference gets them; the finder's row leaves the encoding out
    const foundArgs = [file, '--format', 'raw', '--sample-rate', String(BIT_RATE * spb), '--channels', 'clk,a,b', '--clock', 'clk', '--data', 'a,b'];
    const cliArgs = [...foundArgs, '--encoding', 'nrz'];
    const cliBundle = fileURLToPath(await ensureServerBuild('decode'));
    const benchBundle = await bundle('server/cli/bench.ts', dir, 'bench.mjs');
    const runs = 2;
    process.stdout.write(`\n${fmt(mb(written), 0)} MB raw capture, ${spb} samples/bit, 2 links; best of ${runs} runs each; load average ${loadNow()} now\n`);
    printHeader();
    const row = (stage: string, t: Timed, target: string, ref: Timed | null, note = '') => {
      const ratio = ref ? `; ${fmt(t.secs / ref.secs, 2)}× C wall, ${fmt(t.cpuSecs / Math.max(ref.cpuSecs, 0.01), 2)}× C CPU` : '';
      report({
        stage,
        mbPerS: mb(written) / t.secs,
        mSamplesPerS: written / t.secs / 1e6,
        mbitPerS: (written / spb) * 2 / t.secs / 1e6,
        perCpu: `${fmt(written / Math.max(t.cpuSecs, 0.01) / 1e6)} M samples`,
        rssMb: t.peakKb / 1024,
        target,
        note: `${fmt(t.frames / t.secs / 1000, 0)}k frames/s; ${fmt(t.secs, 2)} s wall, ${fmt(t.cpuSecs, 2)} CPU-s${ratio}${note ? '; ' + note : ''} (load ${loadNow()})`,
      });
    };
    const reference = compileReference(dir);
    const c = reference ? await bestChild(runs, reference, [file, '0', 'rising', '1', '2']) : null;
    if (c) row('C reference (bench/reference.c, cc -O2)', c, '—', null, c.note);
    else process.stdout.write('C reference: no C compiler (cc) here, ratios not measured\n');
    const cli = await bestChild(runs, process.execPath, [cliBundle, ...cliArgs]);
    row('CLI decode (compiled, dist/server), end to end', cli, '≤ 2× C; RSS < 300 MB', c, `${cli.frames} frames, start-up included, settings given`);
    const found = await bestChild(runs, process.execPath, [cliBundle, ...foundArgs]);
    row('  the same, settings found by the finder', found, '—', c);
    const npmCli = await bestChild(runs, 'npm', ['run', '--silent', 'decode', '--', ...cliArgs]);
    row('CLI decode via npm run decode, end to end', npmCli, '—', c);
    const stage = (name: Stage) => bestChild(runs, process.execPath, [benchBundle, '--stage', name, '--file', file]);
    row('  read only (1 MB reused buffer)', await stage('read'), '—', c);
    row('  + bit recovery (fused raw path)', await stage('bits'), '—', c);
    const frames = await stage('frames');
    row('  + deframing, FCS, link decode, time order', frames, '—', c);
    row('  + NDJSON writer (output dropped)', await stage('ndjson'), '—', c);
    const tapped = await stage('tap');
    row("decoder + anomaly tap, as the app's worker", tapped, '≤ 1.2× CLI', c, `${fmt(tapped.secs / cli.secs, 2)}× CLI wall, ${fmt(tapped.cpuSecs / cli.cpuSecs, 2)}× CLI CPU; ${fmt(tapped.cpuSecs / frames.cpuSecs, 2)}× CPU of the decoder without the tap`);
    if (general) {
      const slow = await stage('tap-general');
      row('decoder + anomaly tap, general path', slow, '—', c, `${fmt(slow.cpuSecs / tapped.cpuSecs, 2)}× CPU of the fused path with the tap`);
    }
    process.stdout.write('(stage rows: one fresh process each, timed from the first byte read, so without node\'s start-up; peak RSS of the whole process)\n');
  } finally {
    rmSync(dir, { recursive: true, force: true });
  }
}

/**
 * Peak memory on one large raw capture: the decode CLI (one JS file, as a compiled entry runs),
 * the decoder with the anomaly tap as the server's decode worker runs it, and the browser's decode
 * worker in Chromium (bench-memory.ts). Target: under 300 MB RSS for 1 GB.
 */
async function benchMemory(sizeMb: number): Promise<void> {
  const dir = mkdtempSync(join(tmpdir(), 'flagline-bench-memory-'));
  try {
    const { file, written } = writeRawCapture(dir, sizeMb);
    process.stdout.write(`\nMemory: ${fmt(mb(written), 0)} MB raw capture (${DENSE} samples/bit, clock + 2 links); load average ${loadNow()} now\n`);
    printHeader();
    const row = (stage: string, secs: number, peakMb: number, note: string) =>
      report({ stage, mbPerS: mb(written) / secs, mSamplesPerS: written / secs / 1e6, rssMb: peakMb, target: 'RSS < 300 MB at 1 GB', note: `${note}; ${fmt(secs, 1)} s wall (load ${loadNow()})` });
    const cliBundle = await bundle('server/cli/decode.ts', dir, 'decode.mjs');
    const cliArgs = [file, '--format', 'raw', '--sample-rate', String(BIT_RATE * DENSE), '--channels', 'clk,a,b', '--clock', 'clk', '--data', 'a,b', '--encoding', 'nrz'];
    const cli = await bestChild(1, process.execPath, [cliBundle, ...cliArgs]);
    row('CLI decode (one JS file), peak RSS', cli.secs, cli.peakKb / 1024, `${cli.frames} frames`);
    const benchBundle = await bundle('server/cli/bench.ts', dir, 'bench.mjs');
    const tapped = await bestChild(1, process.execPath, [benchBundle, '--stage', 'tap', '--file', file]);
    row("decoder + anomaly tap, as the server's worker", tapped.secs, tapped.peakKb / 1024, `${tapped.frames} frames`);
    const settings = captureSettingsSchema.parse({
      format: 'raw',
      sampleRate: BIT_RATE * DENSE,
      rawWidth: 1,
      channelNames: ['clk', 'a', 'b'],
      clock: 'clk',
      links: [{ channel: 'a' }, { channel: 'b' }],
      encoding: 'nrz',
      edge: 'rising',
    });
    const w = await measureBrowserWorker(file, settings, dir);
    row('browser decode worker (Chromium renderer)', w.secs, w.rendererPeakMb, `${w.frames} frames, the first on the page after ${w.firstFramesSecs === null ? '—' : fmt(w.firstFramesSecs, 2) + ' s'}, decoded file ${fmt(mb(w.decodedBytes), 1)} MB; all Chromium processes together at most ${fmt(w.totalPeakMb, 0)} MB`);
  } finally {
    rmSync(dir, { recursive: true, force: true });
  }
}

/** clock ticks per second of /proc/<pid>/stat times (USER_HZ, 100 on Linux) */
const TICKS = 100;
/** GNU time: reports a child's CPU time and peak RSS including the children it waited for (npm → node) */
const GNU_TIME = '/usr/bin/time';

/**
 * Runs a child and counts its stdout lines. CPU time (user + system) and peak RSS come from GNU
 * time when it is installed (whole process tree), else from sampling /proc while the child runs
 * (that process only; the CPU time misses at most the last 20 ms).
 */
function runMeasured(cmd: string, args: string[], stderr: 'inherit' | 'ignore' = 'inherit'): Promise<{ code: number | null; peakKb: number; lines: number; cpuSecs: number; out: string }> {
  const timeFile = existsSync(GNU_TIME) ? join(mkdtempSync(join(tmpdir(), 'flagline-time-')), 'time') : null;
  return new Promise((resolve) => {
    const child = timeFile
      ? spawn(GNU_TIME, ['-f', '%U %S %M', '-o', timeFile, cmd, ...args], { stdio: ['ignore', 'pipe', stderr] })
      : spawn(cmd, args, { stdio: ['ignore', 'pipe', stderr] });
    let peakKb = 0;
    let lines = 0;
    let cpuSecs = 0;
    let out = '';
    const sample = () => {
      if (timeFile) return;
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
      if (timeFile) {
        const [user, sys, rssKb] = readFileSync(timeFile, 'utf8').trim().split('\n').pop()!.split(' ').map(Number);
        cpuSecs = user + sys;
        peakKb = rssKb;
        rmSync(dirname(timeFile), { recursive: true, force: true });
      }
      resolve({ code, peakKb, lines, cpuSecs, out });
    });
  });
}

async function main(): Promise<void> {
  const { values } = parseArgs({
    options: {
      memory: { type: 'string' },
      'cli-mb': { type: 'string' },
      'cli-only': { type: 'boolean' },
      general: { type: 'boolean' },
      timing: { type: 'boolean' },
      readers: { type: 'boolean' },
      stage: { type: 'string' },
      file: { type: 'string' },
    },
    strict: true,
  });
  if (values.stage !== undefined) {
    if (!(STAGES as readonly string[]).includes(values.stage) || !values.file) throw new Error(`--stage takes one of ${STAGES.join(', ')} and --file`);
    runStage(values.stage as Stage, values.file, DENSE);
    return;
  }
  if (values.readers) {
    benchReaders((line) => process.stdout.write(line + '\n'));
    return;
  }
  process.stdout.write(`Flagline decoder benchmarks (node ${process.version}; load average ${loadavg().map((l) => l.toFixed(1)).join(' ')}; ${cpus().length} CPUs)\n`);
  process.stdout.write(`Sample density: ${BIT_RATE / 1000} kbit/s links sampled at ${(BIT_RATE * DENSE) / 1e6} MHz (${DENSE} samples/bit, as real captures), and at ${SPARSE} samples/bit.\n`);
  process.stdout.write('Rates are wall-clock, best of a few runs; "per CPU-s" is the same work per CPU-second of this process.\n');
  process.stdout.write('Peak RSS of the in-memory stages includes the captures the bench generates; the CLI row is the decoder streaming a file.\n\n');
  if (values.memory !== undefined) {
    // `--memory 1024` gives the size in MB (0 or no number: 1 GB)
    await benchMemory(Number(values.memory) || 1024);
    return;
  }
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
    for (const r of await benchStartup()) report({ stage: r.stage, rssMb: peakRssMb(), target: r.target, note: r.note });
  }
  if (values['cli-mb'] !== undefined) {
    const size = Number(values['cli-mb']);
    if (!(size > 0)) throw new Error('--cli-mb needs a size in MB');
    await benchCli(size, values.general === true);
  }
}

main().catch((e) => {
  process.stderr.write(`bench: ${(e as Error).message}\n`);
  process.exit(1);
});
