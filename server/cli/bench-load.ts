// `npm run bench:load`: the server under concurrent readers, end to end over HTTP.
//   npm run bench:load                                   76 800 frames, 20 clients × 200 requests, idle and during a 400 MB decode
//   npm run bench:load -- --frames 20000 --clients 5 --requests 50 --decode-mb 50   a quick run
// Makes a capture with our own encoder, starts the real server (compiled, as `npm start` runs it) in a child
// process on a fresh database, uploads and decodes the capture through the API, then lets N
// signed-in clients each send M requests back to back: timeline pages (first, at a time,
// backward), filters (status, station and kind, command in a time range), searches (text, hex)
// and counts. Phase two repeats the load while a raw capture of --decode-mb MB is decoded (and
// decoded again whenever it finishes, so the decode queue is busy the whole time). Reports
// p50/p95/p99 latency, requests per second and errors per phase and per kind of request.
// Targets are printed beside the figures, not asserted.
import { spawn, type ChildProcess } from 'node:child_process';
import fs from 'node:fs';
import os from 'node:os';
import path from 'node:path';
import { parseArgs } from 'node:util';
import { encodeLineBits, randomFrame, seededRng, type LineItem, renderWaveform, octetsFromLineBits, rawChunks } from '../../shared/decoder/encode';
import type { CaptureSettingsInput, DecodeJob } from '../../shared/schemas';
import { createPasswordHasher } from '../auth/passwords';
import { openDb, repoRoot } from '../db/client';
import { memberships, rigs, stations, users } from '../db/schema';

const USAGE = `npm run bench:load -- [options]
  --frames N       frames in the browsed capture (76800)
  --clients N      concurrent signed-in clients (20)
  --requests N     requests per client and phase (200)
  --decode-mb N    size of the raw capture decoded during the second phase (400)
  --phases LIST    idle, decode or both (idle,decode)
  --keep           keep the temp folder
  --profile DIR    write the server's CPU profiles there (one per thread)`;

function readArgs() {
  try {
    return parseArgs({
  options: {
    help: { type: 'boolean', short: 'h', default: false },
    frames: { type: 'string', default: '76800' },
    clients: { type: 'string', default: '20' },
    requests: { type: 'string', default: '200' },
    'decode-mb': { type: 'string', default: '400' },
    /** which load phases to run: idle, decode or both */
    phases: { type: 'string', default: 'idle,decode' },
    keep: { type: 'boolean', default: false },
    /** a folder for the server's CPU profiles (node --cpu-prof: one file per thread, written when it stops) */
    profile: { type: 'string' },
  },
  strict: true,
    });
  } catch (err) {
    console.error(`${err instanceof Error ? err.message : String(err)}\n\n${USAGE}`);
    process.exit(2);
  }
}
const { values } = readArgs();
if (values.help) {
  console.log(USAGE);
  process.exit(0);
}
const FRAMES = Number(values.frames);
const CLIENTS = Number(values.clients);
const REQUESTS = Number(values.requests);
const PHASES = new Set(values.phases.split(','));
const DECODE_MB = PHASES.has('decode') ? Number(values['decode-mb']) : 0;
const EMAIL = 'load@bench.test';
const PASSWORD = 'bench password 1';
const STATIONS = [0x21, 0x22, 0x23, 0x24, 0x10];
const BIT_RATE = 800_000;

const ascii = (s: string) => Array.from(s, (c) => c.charCodeAt(0));

/** frame k: a CP/M-style file request (I), an RR, or a print line; every 50th has a flipped bit */
function frameItem(k: number): LineItem {
  const address = STATIONS[k % STATIONS.length];
  let bytes: number[];
  if (k % 4 === 3) bytes = [address, 0x01 | ((k & 7) << 5)];
  else if (k % 13 === 12) bytes = [address, 0x13, ...ascii(`PRINT LINE ${k}`)];
  else bytes = [address, ((k & 7) << 1) | (((k + 1) & 7) << 5), 0x0f, k & 0xff, (k >> 8) & 0xff, ...ascii(`FILE${String(k % 100000).padStart(5, '0')}.DAT`), 0x1a, 0x00];
  return { kind: 'frame', bytes: Uint8Array.from(bytes), faults: k % 50 === 49 ? { flipBits: [20] } : undefined };
}

/** the capture the clients read: an octet stream (line bits) of `frames` frames */
function writeTimelineCapture(file: string, frames: number): void {
  const fd = fs.openSync(file, 'w');
  for (let start = 0; start < frames; start += 5000) {
    const items: LineItem[] = [{ kind: 'flags', count: 1 }];
    for (let k = start; k < Math.min(frames, start + 5000); k++) items.push(frameItem(k), { kind: 'flags', count: 1 + (k % 3) });
    // an idle stretch fills the last octet, so blocks join on octet boundaries
    const n = encodeLineBits(items).bits.length;
    items.push({ kind: 'idle', count: 15 + ((8 - ((n + 15) % 8)) % 8) });
    fs.writeSync(fd, octetsFromLineBits(encodeLineBits(items).bits));
  }
  fs.closeSync(fd);
}

/** the capture decoded meanwhile: raw 1-byte samples (clock, two links), 10 samples per bit, one block repeated */
function writeDecodeCapture(file: string, megabytes: number): number {
  const rng = seededRng(7);
  const link = () => {
    const items: LineItem[] = [{ kind: 'flags', count: 4 }];
    for (let i = 0; i < 700; i++) items.push({ kind: 'frame', bytes: randomFrame(rng, 48) }, { kind: 'flags', count: 2 });
    return encodeLineBits(items).bits;
  };
  const a = link();
  const b = link();
  const bits = Math.min(a.length, b.length);
  const w = renderWaveform({
    links: [
      { name: 'a', bits: a.subarray(0, bits) },
      { name: 'b', bits: b.subarray(0, bits) },
    ],
    samplesPerBit: 10,
    samplePeriodSeconds: 1 / (BIT_RATE * 10),
    encoding: 'nrz',
    clock: { name: 'clk', edge: 'rising' },
  });
  const block = Buffer.concat([...rawChunks(w, { chunkSize: 1 << 22 })].map((c) => Buffer.from(c)));
  const fd = fs.openSync(file, 'w');
  let written = 0;
  while (written < megabytes * 1e6) written += fs.writeSync(fd, block);
  fs.closeSync(fd);
  return written;
}

/** A fetch client that keeps its cookies and sends its CSRF token. */
class Client {
  private cookies = new Map<string, string>();
  csrf = '';
  constructor(private readonly base: string) {}

  async request(method: string, url: string, body?: unknown, contentType = 'application/json'): Promise<Response> {
    const headers: Record<string, string> = { cookie: [...this.cookies].map(([k, v]) => `${k}=${v}`).join('; ') };
    if (method !== 'GET') headers['x-csrf-token'] = this.csrf;
    let payload: BodyInit | undefined;
    if (body instanceof FormData) payload = body;
    else if (body !== undefined) {
      headers['content-type'] = contentType;
      payload = JSON.stringify(body);
    }
    const res = await fetch(this.base + url, { method, headers, body: payload });
    for (const c of res.headers.getSetCookie()) {
      const [pair] = c.split(';');
      const i = pair.indexOf('=');
      this.cookies.set(pair.slice(0, i), pair.slice(i + 1));
    }
    return res;
  }

  async json<T>(method: string, url: string, body?: unknown): Promise<T> {
    const res = await this.request(method, url, body);
    const text = await res.text();
    if (!res.ok) throw new Error(`${method} ${url} answered ${res.status}: ${text.slice(0, 300)}`);
    return JSON.parse(text) as T;
  }

  async signIn(): Promise<void> {
    this.csrf = (await this.json<{ csrfToken: string }>('GET', '/api/session')).csrfToken;
    this.csrf = (await this.json<{ csrfToken: string }>('POST', '/api/session', { email: EMAIL, password: PASSWORD })).csrfToken;
  }
}

/** a fresh database with one analyst, one rig and its stations; the server then applies nothing new */
async function prepareDatabase(dbPath: string): Promise<number> {
  const handle = openDb(dbPath);
  try {
    const passwordHash = await createPasswordHasher(4).hash(PASSWORD);
    const db = handle.db;
    const userId = db.insert(users).values({ email: EMAIL, name: 'Load Bench', passwordHash }).returning().get().id;
    const rigId = db.insert(rigs).values({ name: 'Load bench', bitRate: BIT_RATE, encoding: 'nrz', clockEdge: 'rising', bitOrder: 'lsb-first' }).returning().get().id;
    db.insert(memberships).values({ rigId, userId, role: 'owner' }).run();
    STATIONS.forEach((address, i) => db.insert(stations).values({ rigId, address, name: `Desk ${i}`, role: address === 0x10 ? 'server' : 'station' }).run());
    return rigId;
  } finally {
    handle.close();
  }
}

function startServer(dir: string, dbPath: string): Promise<{ child: ChildProcess; url: string }> {
  // the server as `npm start` runs it: the compiled build (made first when stale)
  const profile = values.profile ? ['--cpu-prof', `--cpu-prof-dir=${path.resolve(values.profile)}`] : [];
  const child = spawn(process.execPath, [...profile, path.join(repoRoot, 'bin/flagline.mjs')], {
    cwd: repoRoot,
    env: {
      ...process.env,
      NODE_ENV: 'production',
      PORT: '0',
      FLAGLINE_DB: dbPath,
      FLAGLINE_DATA_DIR: dir,
      FLAGLINE_DEMO: '0',
      FLAGLINE_SKIP_BUILD: '1',
      FLAGLINE_BCRYPT_COST: '4',
    },
    stdio: ['ignore', 'pipe', 'inherit'],
  });
  return new Promise((resolve, reject) => {
    let out = '';
    child.stdout!.on('data', (d) => {
      out += String(d);
      const m = /is running at (http:\/\/\S+)/.exec(out);
      if (m) resolve({ child, url: m[1].replace('localhost', '127.0.0.1') });
    });
    child.once('exit', (code) => reject(new Error(`the server exited with ${code}: ${out}`)));
  });
}

async function uploadAndDecode(c: Client, rigId: number, file: string, name: string, settings: CaptureSettingsInput, wait: boolean): Promise<string> {
  const form = new FormData();
  form.append('file', await fs.openAsBlob(file), name);
  const capture = await c.json<{ id: number }>('POST', `/api/rigs/${rigId}/captures`, form);
  const base = `/api/rigs/${rigId}/captures/${capture.id}`;
  await c.json('PUT', `${base}/settings`, settings);
  await c.json('POST', `${base}/decode`);
  if (wait) await waitForJob(c, base, (j) => j.state !== 'queued' && j.state !== 'running');
  return base;
}

async function waitForJob(c: Client, base: string, until: (j: DecodeJob) => boolean): Promise<DecodeJob> {
  for (;;) {
    const job = await c.json<DecodeJob>('GET', `${base}/job`);
    if (until(job)) {
      if (job.state === 'failed') throw new Error(`decode failed: ${job.error}`);
      return job;
    }
    await new Promise((r) => setTimeout(r, 250));
  }
}

interface Sample {
  kind: string;
  ms: number;
  ok: boolean;
  start: number;
}

/** The request mix: each entry sends one or two requests and records them. */
function requestMix(base: string, duration: number): { kind: string; run(c: Client, i: number, record: (s: Sample) => void): Promise<void> }[] {
  const timed = async (c: Client, kind: string, url: string, record: (s: Sample) => void): Promise<Response | null> => {
    const start = performance.now();
    try {
      const res = await c.request('GET', url);
      const body = await res.text();
      record({ kind, ms: performance.now() - start, ok: res.ok, start });
      return res.ok ? new Response(body) : null;
    } catch {
      record({ kind, ms: performance.now() - start, ok: false, start });
      return null;
    }
  };
  const at = (i: number) => (((i * 7919) % 1000) / 1000) * duration;
  const simple = (kind: string, query: (i: number) => string) => ({
    kind,
    run: async (c: Client, i: number, record: (s: Sample) => void) => void (await timed(c, kind, `${base}/timeline?${query(i)}`, record)),
  });
  return [
    simple('first page (events merged)', () => 'limit=200'),
    {
      kind: 'page at a time (at + page)',
      run: async (c, i, record) => {
        const res = await timed(c, 'page at a time (at + page)', `${base}/timeline/at?t=${at(i)}&events=0`, record);
        const cursor = res ? ((await res.json()) as { cursor: string | null }).cursor : null;
        if (cursor) await timed(c, 'page at a time (at + page)', `${base}/timeline?limit=200&events=0&cursor=${cursor}`, record);
      },
    },
    simple('last page (backward)', () => 'limit=200&direction=backward&events=0'),
    simple('filter status=bad-fcs', () => 'limit=200&status=bad-fcs'),
    simple('filter station + kind', (i) => `limit=200&station=${STATIONS[i % STATIONS.length]}&kind=I`),
    simple('filter command in a time range', (i) => `limit=200&command=RR&from=${at(i)}&to=${at(i) + duration / 10}`),
    simple('search text', (i) => `limit=200&text=file${String((i * 37) % 76800).padStart(5, '0')}`),
    simple('search hex', () => 'limit=200&hex=1a%2000&events=0'),
    {
      kind: 'count (filter)',
      run: async (c, i, record) => void (await timed(c, 'count (filter)', `${base}/timeline/count?${i % 2 ? 'status=bad-fcs' : 'kind=S'}`, record)),
    },
  ];
}

async function runLoad(clients: Client[], base: string, duration: number): Promise<{ samples: Sample[]; seconds: number }> {
  const mix = requestMix(base, duration);
  const samples: Sample[] = [];
  const t0 = performance.now();
  await Promise.all(
    clients.map(async (c, ci) => {
      for (let i = 0, j = ci; i < REQUESTS; j++) {
        const entry = mix[j % mix.length];
        let n = 0;
        await entry.run(c, ci * REQUESTS + i, (s) => (samples.push(s), n++));
        i += Math.max(1, n);
      }
    }),
  );
  return { samples, seconds: (performance.now() - t0) / 1000 };
}

/** utime + stime of a /proc stat line, in seconds (clock ticks: USER_HZ, 100 on Linux) */
function statSeconds(file: string): number {
  try {
    const stat = fs.readFileSync(file, 'utf8');
    const f = stat.slice(stat.lastIndexOf(')') + 2).split(' ');
    return (Number(f[11]) + Number(f[12])) / 100;
  } catch {
    return 0;
  }
}

/**
 * CPU seconds of the server process (with every thread it has had, ended ones included) and of its
 * live threads by name (Linux /proc; zeros elsewhere): the request thread is the main one, the
 * read pool's and decode's threads name themselves (server/jobs/thread-priority.ts), the rest are
 * Node's own (garbage collection, compilation, file I/O).
 */
interface ServerCpu {
  total: number;
  threads: Map<number, { name: string; seconds: number }>;
}
function serverCpu(pid: number | undefined): ServerCpu {
  const threads = new Map<number, { name: string; seconds: number }>();
  if (pid === undefined) return { total: 0, threads };
  try {
    for (const tid of fs.readdirSync(`/proc/${pid}/task`)) {
      try {
        const name = fs.readFileSync(`/proc/${pid}/task/${tid}/comm`, 'utf8').trim();
        threads.set(Number(tid), { name: Number(tid) === pid ? 'request' : name, seconds: statSeconds(`/proc/${pid}/task/${tid}/stat`) });
      } catch {
        // the thread ended meanwhile
      }
    }
  } catch {
    // not Linux
  }
  return { total: statSeconds(`/proc/${pid}/stat`), threads };
}

/**
 * The CPU a phase used, split: the request thread, the read pool, Node's helper threads (their
 * time while they lived), and the decode as the rest (its threads come and go with each run, and
 * an ended thread's time only shows in the process total).
 */
function cpuSplit(a: ServerCpu, b: ServerCpu): { total: number; request: number; read: number; helpers: number; decode: number } {
  let request = 0;
  let read = 0;
  let helpers = 0;
  for (const [tid, t] of b.threads) {
    if (t.name === 'flagline-decode') continue;
    const used = t.seconds - (a.threads.get(tid)?.seconds ?? 0);
    if (t.name === 'request') request += used;
    else if (t.name.startsWith('flagline-read')) read += used;
    else helpers += used;
  }
  const total = b.total - a.total;
  return { total, request, read, helpers, decode: Math.max(0, total - request - read - helpers) };
}

function percentile(sorted: number[], p: number): number {
  return sorted.length ? sorted[Math.min(sorted.length - 1, Math.ceil(p * sorted.length) - 1)] : NaN;
}

function report(title: string, samples: Sample[], reqPerS: number, target: string, cpu: ReturnType<typeof cpuSplit>): void {
  const line = (name: string, xs: Sample[], rate?: number) => {
    const ms = xs.map((s) => s.ms).sort((a, b) => a - b);
    const errors = xs.filter((s) => !s.ok).length;
    const f = (n: number) => (n >= 1000 ? `${(n / 1000).toFixed(2)} s` : `${n.toFixed(0)} ms`).padStart(8);
    process.stdout.write(
      `  ${name.padEnd(34)} ${String(xs.length).padStart(5)}  p50 ${f(percentile(ms, 0.5))}  p95 ${f(percentile(ms, 0.95))}  p99 ${f(percentile(ms, 0.99))}` +
        `  ${rate === undefined ? '' : `${rate.toFixed(1)} req/s  `}errors ${errors}\n`,
    );
  };
  process.stdout.write(`\n${title}  (target: ${target}; load average at its end ${os.loadavg().map((l) => l.toFixed(1)).join(' ')})\n`);
  // on a shared machine wall times swing with the neighbours; CPU per request is the steadier figure
  if (cpu.total > 0) {
    const per = (x: number) => `${((x * 1000) / samples.length).toFixed(1)} ms`;
    process.stdout.write(
      `  server CPU ${cpu.total.toFixed(1)} s over the phase, ${per(cpu.total)} per request: request thread ${per(cpu.request)}, read pool ${per(cpu.read)}, ` +
        `Node's helper threads ${per(cpu.helpers)}, decode ${per(cpu.decode)}\n`,
    );
  }
  line('all requests', samples, reqPerS);
  const kinds = [...new Set(samples.map((s) => s.kind))];
  for (const kind of kinds) line(kind, samples.filter((s) => s.kind === kind));
}

async function main(): Promise<void> {
  const dir = fs.mkdtempSync(path.join(os.tmpdir(), 'flagline-load-'));
  let server: ChildProcess | undefined;
  try {
    const dbPath = path.join(dir, 'flagline.db');
    const timelineFile = path.join(dir, 'timeline.bin');
    let t = performance.now();
    writeTimelineCapture(timelineFile, FRAMES);
    const decodeFile = path.join(dir, 'decode.raw');
    const decodeBytes = DECODE_MB > 0 ? writeDecodeCapture(decodeFile, DECODE_MB) : 0;
    process.stdout.write(`captures generated in ${((performance.now() - t) / 1000).toFixed(1)} s: ${FRAMES} frames (octet stream), ${(decodeBytes / 1e6).toFixed(0)} MB raw\n`);

    const rigId = await prepareDatabase(dbPath);
    const started = await startServer(dir, dbPath);
    server = started.child;
    const admin = new Client(started.url);
    await admin.signIn();
    t = performance.now();
    const base = await uploadAndDecode(admin, rigId, timelineFile, 'timeline.bin', { format: 'octets', links: [{ channel: 'line' }], bitRate: BIT_RATE, encoding: 'nrz', edge: 'rising' }, true);
    const count = await admin.json<{ count: number }>('GET', `${base}/timeline/count?events=0`);
    if (count.count !== FRAMES) throw new Error(`decoded ${count.count} frames, encoded ${FRAMES}`);
    const last = await admin.json<{ rows: { t: number }[] }>('GET', `${base}/timeline?direction=backward&limit=1&events=0`);
    const duration = last.rows[0].t;
    process.stdout.write(`server up at ${started.url}; ${FRAMES} frames uploaded and decoded in ${((performance.now() - t) / 1000).toFixed(1)} s\n`);

    const clients = Array.from({ length: CLIENTS }, () => new Client(started.url));
    for (const c of clients) await c.signIn();
    process.stdout.write(`${CLIENTS} clients × ${REQUESTS} requests; machine: ${os.cpus().length} cores, load ${os.loadavg().map((l) => l.toFixed(1)).join(' ')}\n`);

    if (PHASES.has('idle')) {
      const cpu0 = serverCpu(server.pid);
      const idle = await runLoad(clients, base, duration);
      report('Idle server', idle.samples, idle.samples.length / idle.seconds, 'p95 < 150 ms, 0 errors', cpuSplit(cpu0, serverCpu(server.pid)));
    }

    if (DECODE_MB > 0) {
      const busyBase = await uploadAndDecode(admin, rigId, decodeFile, 'decode.raw', {
        format: 'raw',
        sampleRate: BIT_RATE * 10,
        channelNames: ['clk', 'a', 'b'],
        clock: 'clk',
        links: [{ channel: 'a' }, { channel: 'b' }],
        encoding: 'nrz',
        edge: 'rising',
      }, false);
      await waitForJob(admin, busyBase, (j) => j.state === 'running');
      // keep the queue busy: decode again whenever a run ends, and note when a decode is running
      const running: [number, number][] = [];
      let since: number | null = performance.now();
      let decodes = 0;
      let stop = false;
      let watcherErrors = 0;
      // bytes the decodes read during the phase: finished runs in full, plus the running one so far
      let bytesDecoded = 0;
      let current = 0;
      let readBefore: number | null = null;
      const watcher = (async () => {
        while (!stop) {
          try {
            const job = await admin.json<DecodeJob>('GET', `${busyBase}/job`);
            const now = performance.now();
            readBefore ??= job.bytesRead;
            if (job.state === 'running' || job.state === 'queued') {
              since ??= now;
              current = job.bytesRead;
            } else {
              bytesDecoded += job.state === 'done' ? job.bytesTotal : current;
              current = 0;
              if (since !== null) running.push([since, now]);
              since = null;
              if (job.state === 'done') decodes++;
              if (job.state === 'failed') throw new Error(`decode failed: ${job.error}`);
              // 409: a run was queued meanwhile, which is what this wanted anyway
              if (!stop) await admin.request('POST', `${busyBase}/decode`).then((r) => r.text());
            }
          } catch (err) {
            // a refused or dropped connection is one of the errors this measures; keep watching
            if (err instanceof Error && err.message.startsWith('decode failed')) throw err;
            watcherErrors++;
          }
          await new Promise((r) => setTimeout(r, 100));
        }
      })();
      const cpu0 = serverCpu(server.pid);
      const busy = await runLoad(clients, base, duration);
      const busyCpu = cpuSplit(cpu0, serverCpu(server.pid));
      stop = true;
      await watcher;
      if (since !== null) running.push([since, performance.now()]);
      const during = busy.samples.filter((s) => running.some(([a, b]) => s.start >= a && s.start <= b));
      report(
        `During a ${(decodeBytes / 1e6).toFixed(0)} MB decode (${during.length} of ${busy.samples.length} requests started while a decode ran; ${decodes} decodes finished meanwhile, ${((bytesDecoded + current - (readBefore ?? 0)) / 1e6).toFixed(0)} MB decoded; ${watcherErrors} failed job polls; server CPU includes the decode)`,
        during,
        busy.samples.length / busy.seconds,
        'p95 < 300 ms, 0 errors',
        busyCpu,
      );
    }
  } finally {
    server?.kill('SIGTERM');
    if (server && server.exitCode === null) await new Promise((r) => server!.once('exit', r));
    if (values.keep) process.stdout.write(`kept ${dir}\n`);
    else fs.rmSync(dir, { recursive: true, force: true });
  }
}

main().catch((err) => {
  process.stderr.write(`bench:load: ${err instanceof Error ? err.message : String(err)}\n`);
  process.exit(1);
});
