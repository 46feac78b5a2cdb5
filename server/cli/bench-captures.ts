// Capture ingest and timeline benchmarks: `npx tsx server/cli/bench-captures.ts [--frames 1000000] [--built]`.
// `--built` runs the same code as `npm start` does, bundled beside dist/server's workers, so worker
// start-up is not the TypeScript loader compiling them.
// Generates a line-bit capture with our own encoder, decodes it through the real job runner and
// worker into a fresh database, then times timeline pages, counts, frame detail and waveform
// windows server-side (service calls, no HTTP). Targets are printed beside the figures, not asserted.
import fs from 'node:fs';
import os from 'node:os';
import path from 'node:path';
import { fileURLToPath } from 'node:url';
import { parseArgs } from 'node:util';
import { encodeLineBits, type LineItem, renderWaveform, octetsFromLineBits, vcdChunks } from '../../shared/decoder/encode';
import { captureSettingsSchema, timelineQuerySchema, type TimelineQuery } from '../../shared/schemas';
import { openDb } from '../db/client';
import { decodeRunInputs } from '../services/calls/run-inputs';
import { findFrame, frameDetail } from '../services/captures/frame-detail';
import { createCaptureModule } from '../services/captures/module';
import { findCapture, parseSettings } from '../services/captures/rows';
import { waveformWindow } from '../services/captures/waveform';

const { values } = parseArgs({
  options: {
    frames: { type: 'string', default: '1000000' },
    'vcd-frames': { type: 'string', default: '6000' },
    keep: { type: 'boolean', default: false },
    built: { type: 'boolean', default: false },
  },
});
const FRAMES = Number(values.frames);
const BLOCK = 5000;
const STATIONS = [0x21, 0x22, 0x23, 0x24, 0x10];

const ascii = (s: string) => Array.from(s, (c) => c.charCodeAt(0));

/** frame k: an I frame with a CP/M-style file request, an RR, or a UI; every 50th has a flipped bit */
function frameItem(k: number): LineItem {
  const address = STATIONS[k % STATIONS.length];
  let bytes: number[];
  if (k % 4 === 3) bytes = [address, 0x01 | ((k & 7) << 5)];
  else if (k % 13 === 12) bytes = [address, 0x13, ...ascii(`PRINT LINE ${k}`)];
  else bytes = [address, ((k & 7) << 1) | (((k + 1) & 7) << 5), 0x0f, k & 0xff, (k >> 8) & 0xff, ...ascii(`FILE${String(k % 100000).padStart(5, '0')}.DAT`), 0x1a, 0x00];
  const faults = k % 50 === 49 ? { flipBits: [20] } : undefined;
  return { kind: 'frame', bytes: Uint8Array.from(bytes), faults };
}

function writeCapture(file: string): number {
  const fd = fs.openSync(file, 'w');
  let bytes = 0;
  for (let start = 0; start < FRAMES; start += BLOCK) {
    const items: LineItem[] = [{ kind: 'flags', count: 1 }];
    for (let k = start; k < Math.min(FRAMES, start + BLOCK); k++) {
      items.push(frameItem(k));
      items.push({ kind: 'flags', count: 1 + (k % 3) });
    }
    // blocks end in an idle stretch (15+ ones) that fills the last octet, so they join on octet boundaries
    const n = encodeLineBits(items).bits.length;
    items.push({ kind: 'idle', count: 15 + ((8 - ((n + 15) % 8)) % 8) });
    const octets = octetsFromLineBits(encodeLineBits(items).bits);
    fs.writeSync(fd, octets);
    bytes += octets.length;
  }
  fs.closeSync(fd);
  return bytes;
}

/** one link of I frames under a clock, 6 samples per bit, as a value change dump */
function vcdCapture(frames: number): Buffer {
  const items: LineItem[] = [{ kind: 'flags', count: 2 }];
  for (let k = 0; k < frames; k++) {
    items.push(frameItem(k));
    items.push({ kind: 'flags', count: 1 + (k % 3) });
  }
  const w = renderWaveform({
    links: [{ name: 'tx', bits: encodeLineBits(items).bits }],
    samplesPerBit: 6,
    samplePeriodSeconds: 1e-7,
    encoding: 'nrz',
    clock: { name: 'clk', edge: 'rising' },
  });
  return Buffer.concat(Array.from(vcdChunks(w, { timescale: '100 ns' }), (c) => Buffer.from(c)));
}

function percentile(xs: number[], p: number): number {
  const s = [...xs].sort((a, b) => a - b);
  return s[Math.min(s.length - 1, Math.floor((p / 100) * s.length))];
}

function timed(n: number, fn: (i: number) => void): { p50: number; p95: number } {
  const ms: number[] = [];
  for (let i = 0; i < n; i++) {
    const t0 = performance.now();
    fn(i);
    ms.push(performance.now() - t0);
  }
  return { p50: percentile(ms, 50), p95: percentile(ms, 95) };
}

const line = (what: string, measured: string, target: string) => process.stdout.write(`${what.padEnd(52)} ${measured.padEnd(34)} ${target}\n`);

async function main() {
  const dir = fs.mkdtempSync(path.join(os.tmpdir(), 'flagline-bench-'));
  try {
    const captureFile = path.join(dir, 'bench.bin');
    let t0 = performance.now();
    const size = writeCapture(captureFile);
    line(`generate ${FRAMES} frames (octet stream)`, `${(size / 1e6).toFixed(1)} MB in ${((performance.now() - t0) / 1000).toFixed(1)} s`, '');

    const handle = openDb(path.join(dir, 'bench.db'));
    const m = createCaptureModule({ db: handle.db, sqlite: handle.sqlite, dbPath: handle.path, dataDir: dir });
    const { sha256 } = await m.store.adopt(captureFile);
    const sqlite = handle.sqlite;
    sqlite.prepare("insert into users (email, name, password_hash, created_at) values ('bench@example.test', 'Bench', 'x', 0)").run();
    sqlite.prepare("insert into rigs (name, bit_rate, encoding, clock_edge, bit_order, created_at) values ('Bench', 800000, 'nrz', 'rising', 'lsb-first', 0)").run();
    STATIONS.forEach((a, i) => sqlite.prepare("insert into stations (rig_id, address, name, role) values (1, ?, ?, 'station')").run(a, `Desk ${i}`));
    const settings = captureSettingsSchema.parse({ format: 'octets', links: [{ channel: 'line' }], bitRate: 800000, encoding: 'nrz', edge: 'rising' });
    sqlite
      .prepare("insert into captures (rig_id, name, size, sha256, format, settings, uploaded_by, created_at) values (1, 'bench.bin', ?, ?, 'octets', ?, 1, 0)")
      .run(size, sha256, JSON.stringify(settings));

    const wallStart = Date.now();
    t0 = performance.now();
    // worker threads count in process.cpuUsage: CPU seconds show the cost on a shared machine
    const cpu0 = process.cpuUsage();
    const load0 = os.loadavg()[0];
    m.jobs.enqueue(1, decodeRunInputs(handle.db, 1, settings), size);
    await m.jobs.idle();
    const ingest = (performance.now() - t0) / 1000;
    const visible = (m.jobs.visibleAt - wallStart) / 1000;
    const phases = m.jobs.lastTimings;
    const cpu = process.cpuUsage(cpu0);
    const cpuSeconds = (cpu.user + cpu.system) / 1e6;
    const job = sqlite.prepare('select state, frames, events, error from decode_jobs where id = 1').get() as { state: string; frames: number; events: number; error: string | null };
    if (job.state !== 'done') throw new Error(`decode ${job.state}: ${job.error}`);
    if (job.frames !== FRAMES) throw new Error(`decoded ${job.frames} frames, encoded ${FRAMES}`);
    if (phases) {
      const { cpu: threadCpu, ...wall } = phases;
      line('ingest phases (worker, wall)', Object.entries(wall).map(([k, v]) => `${k} ${(v / 1000).toFixed(1)} s`).join(', '), '');
      line(
        'ingest CPU of the worker and its decoder thread',
        `writer: to the decoder's end ${(threadCpu.decodeAndRows / 1000).toFixed(1)} s, to visible ${(threadCpu.toVisible / 1000).toFixed(1)} s, search index ${(threadCpu.searchIndex / 1000).toFixed(1)} s; decoder thread ${(threadCpu.decoderThread / 1000).toFixed(1)} s`,
        '',
      );
    }
    line('ingest: decode start → run visible', `${visible.toFixed(1)} s`, 'target < 20 s for 1M frames');
    line('ingest: … → search index built (worker done)', `${ingest.toFixed(1)} s (${cpuSeconds.toFixed(1)} s CPU, all threads), ${Math.round(FRAMES / ingest)} frames/s`, '');
    line('load average before / after the run', `${load0.toFixed(1)} / ${os.loadavg().map((l) => l.toFixed(1)).join(' ')}`, `${os.cpus().length} cores`);
    line('database size', `${(fs.statSync(handle.path).size / 1e6).toFixed(0)} MB`, '');

    const capture = findCapture(m, 1, 1);
    const jobId = capture.currentJobId!;
    const q = (params: Record<string, string>): TimelineQuery => timelineQuerySchema.parse(params);
    const duration = (sqlite.prepare('select max(t) as t from frames where job_id = ?').get(jobId) as { t: number }).t;
    const REPS = 200;
    const cases: [string, Record<string, string>][] = [
      ['first page, events merged', {}],
      ['page from a random time', { events: '0' }],
      ['status=bad-fcs from a random time', { status: 'bad-fcs' }],
      ['station=0x23, kind=I from a random time', { station: String(0x23), kind: 'I' }],
      ['command=RR, time range', { command: 'RR', from: String(duration * 0.4), to: String(duration * 0.6) }],
      ['text "file01234" (trigram)', { text: 'file01234' }],
      ['hex "1a 00" (trigram + alignment)', { hex: '1a 00', events: '0' }],
      ['hex "0f ?? ?? 46 49" (wildcards)', { hex: '0f ?? ?? 46 49' }],
      ['backward page from a random time', { direction: 'backward', events: '0' }],
    ];
    for (const [name, params] of cases) {
      const r = timed(REPS, (i) => {
        const random = name.includes('random') || name.startsWith('backward');
        const cursor = random ? m.timeline.at(((i * 7919) % REPS) / REPS * duration) : undefined;
        const query = q({ ...params, limit: '200' });
        if (cursor) {
          query.cursor = params.direction === 'backward' ? Buffer.from(JSON.stringify([((i * 7919) % REPS) / REPS * duration, 2, 0, 'b'])).toString('base64url') : cursor;
        }
        m.timeline.page(1, jobId, query);
      });
      line(`timeline: ${name}`, `p50 ${r.p50.toFixed(2)} ms, p95 ${r.p95.toFixed(2)} ms`, 'target p95 < 50 ms');
    }
    for (const [name, params] of [
      ['count, no filter', {}],
      ['count, status=bad-fcs', { status: 'bad-fcs' }],
      ['count, text "file01234"', { text: 'file01234' }],
    ] as [string, Record<string, string>][]) {
      const r = timed(20, () => m.timeline.count(jobId, q(params)));
      line(`timeline: ${name}`, `p50 ${r.p50.toFixed(2)} ms, p95 ${r.p95.toFixed(2)} ms`, '');
    }

    const ids = sqlite.prepare('select min(id) as lo, max(id) as hi from frames where job_id = ?').get(jobId) as { lo: number; hi: number };
    const s = parseSettings(capture.settings)!;
    const period = (sqlite.prepare('select sample_period as p from decode_jobs where id = ?').get(jobId) as { p: number }).p;
    const ms: number[] = [];
    for (let i = 0; i < 100; i++) {
      const id = ids.lo + Math.floor(((i * 7919) % 100) / 100 * (ids.hi - ids.lo));
      const t = performance.now();
      const f = findFrame(m, jobId, id);
      frameDetail(m, m.timeline, 1, f);
      await waveformWindow(m, sha256, s, period, f, 16, 2000);
      ms.push(performance.now() - t);
    }
    line('frame detail + waveform window (random frames)', `p50 ${percentile(ms, 50).toFixed(2)} ms, p95 ${percentile(ms, 95).toFixed(2)} ms`, 'target < 50 ms');

    // a clocked VCD: waveform windows resume at the seek index instead of reading from the start
    const vcdFrames = Number(values['vcd-frames']);
    if (vcdFrames > 0) {
      const vcd = vcdCapture(vcdFrames);
      const vcdFile = path.join(dir, 'bench.vcd');
      fs.writeFileSync(vcdFile, vcd);
      const stored = await m.store.adopt(vcdFile);
      const vcdSettings = captureSettingsSchema.parse({ format: 'vcd', clock: 'clk', links: [{ channel: 'tx' }], encoding: 'nrz', edge: 'rising' });
      sqlite
        .prepare("insert into captures (id, rig_id, name, size, sha256, format, settings, uploaded_by, created_at) values (2, 1, 'bench.vcd', ?, ?, 'vcd', ?, 1, 0)")
        .run(vcd.length, stored.sha256, JSON.stringify(vcdSettings));
      t0 = performance.now();
      m.jobs.enqueue(2, decodeRunInputs(handle.db, 2, vcdSettings), vcd.length);
      await m.jobs.idle();
      line(`ingest of a ${(vcd.length / 1e6).toFixed(0)} MB clocked VCD (${vcdFrames} frames)`, `${((performance.now() - t0) / 1000).toFixed(1)} s`, '');
      const vcdJob = findCapture(m, 1, 2).currentJobId!;
      const vcdPeriod = (sqlite.prepare('select sample_period as p from decode_jobs where id = ?').get(vcdJob) as { p: number }).p;
      const vids = sqlite.prepare('select id from frames where job_id = ? order by id').pluck().all(vcdJob) as number[];
      const timesFor = async (n: number) => {
        const out: number[] = [];
        for (let i = 0; i < n; i++) {
          const f = findFrame(m, vcdJob, vids[Math.floor((((i * 7919) % n) / n) * vids.length)]);
          const t = performance.now();
          await waveformWindow(m, stored.sha256, vcdSettings, vcdPeriod, f, 16, 2000);
          out.push(performance.now() - t);
        }
        return out;
      };
      const seeked = await timesFor(50);
      line('VCD waveform window, seek index', `p50 ${percentile(seeked, 50).toFixed(2)} ms, p95 ${percentile(seeked, 95).toFixed(2)} ms`, 'target < 50 ms');
      sqlite.prepare('delete from seek_points where job_id = ?').run(vcdJob);
      const plain = await timesFor(10);
      line('VCD waveform window, read from the start', `p50 ${percentile(plain, 50).toFixed(2)} ms, p95 ${percentile(plain, 95).toFixed(2)} ms`, '(for comparison)');
    }
    await m.jobs.close();
    handle.close();
  } finally {
    if (!values.keep) fs.rmSync(dir, { recursive: true, force: true });
    else console.log(`kept ${dir}`);
  }
}

/** Bundles this benchmark into dist/server beside the built workers and runs it there. */
async function runBuilt(): Promise<number> {
  const { ensureServerBuild, serverDist, BUNDLED_WORKERS } = await import('./server-build.mjs');
  await ensureServerBuild('start');
  const { build } = await import('esbuild');
  const out = path.join(serverDist, `bench-captures-${process.pid}.mjs`);
  await build({ entryPoints: [fileURLToPath(import.meta.url)], outfile: out, bundle: true, format: 'esm', platform: 'node', target: 'node20', packages: 'external', logLevel: 'warning', define: { ...BUNDLED_WORKERS, BENCH_BUNDLED: 'true' } });
  try {
    const args = process.argv.slice(2).filter((a) => a !== '--built');
    const { spawnSync } = await import('node:child_process');
    return spawnSync(process.execPath, [out, ...args], { stdio: 'inherit' }).status ?? 1;
  } finally {
    fs.rmSync(out, { force: true });
  }
}
declare const BENCH_BUNDLED: boolean | undefined;

// exits when done: a handle the benchmark does not close (the timeline services', say) would keep it running
if (values.built && typeof BENCH_BUNDLED === 'undefined') void runBuilt().then((code) => process.exit(code));
else main().then(() => process.exit(0), (err: unknown) => {
  console.error(err);
  process.exit(1);
});
