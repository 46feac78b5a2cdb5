// The fuzzer: seeded mutations of every sample capture, each decoded in a worker thread with a
// time and memory budget. A hang, a crash (a throw other than the decoder's DecodeError) or a
// memory blow-up is a failure, reported with the input shrunk to the smallest that still fails.
import { writeFileSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { Worker } from 'node:worker_threads';
import type { DecoderOptions } from '../../../shared/decoder/pipeline';
import type { CaptureFormat } from '../../../shared/decoder/types';
import { loadSeeds, type Seed } from './corpus';
import { mutate, rng } from './mutate';
import type { Job, Outcome } from './worker';

export interface FuzzOptions {
  /** repository root (samples/ is read from there) */
  root: string;
  /** cases in all, spread evenly over the seeds */
  cases: number;
  seed: number;
  /** a decode taking longer is a hang */
  timeoutMs?: number;
  /** the worker's heap limit */
  memoryMb?: number;
  /** bytes of each sample capture used as a seed */
  headBytes?: number;
  formats?: CaptureFormat[];
  /** shrink failing inputs (costs a decode per attempt) */
  minimize?: boolean;
  log?: (line: string) => void;
  /** the worker module (the harness's own tests put in one that misbehaves on purpose) */
  workerEntry?: URL;
  /** decodes spent shrinking one failing input (default 40) */
  shrinkAttempts?: number;
  /** stop early once this says so (e.g. enough failures seen) */
  stopWhen?: (failures: Failure[]) => boolean;
}

export type FailureKind = 'hang' | 'crash' | 'memory';

export interface Failure {
  kind: FailureKind;
  seed: string;
  caseIndex: number;
  steps: string[];
  options: DecoderOptions;
  /** the smallest input found that still fails the same way */
  bytes: Uint8Array;
  originalLength: number;
  detail: string;
}

export interface FuzzResult {
  cases: number;
  failures: Failure[];
  /** cases the decoder refused with a clear message (fine: bad input) */
  refused: number;
  /** cases that decoded at least one frame */
  withFrames: number;
  ms: number;
}

type Verdict = { kind: 'ok'; outcome: Outcome } | { kind: FailureKind; detail: string };

/** One worker thread, replaced after a hang or a crash. */
class Runner {
  private worker: Worker | null = null;
  private next = 1;

  constructor(
    private readonly timeoutMs: number,
    private readonly memoryMb: number,
    private readonly entry: URL = new URL('./worker.ts', import.meta.url),
  ) {}

  private spawn(): Worker {
    // TypeScript goes through tsx's loader; a plain module runs as it is
    const plain = this.entry.pathname.endsWith('.mjs');
    const w = new Worker(plain ? this.entry : new URL('./boot.mjs', import.meta.url), {
      workerData: { entry: this.entry.href },
      resourceLimits: { maxOldGenerationSizeMb: this.memoryMb, maxYoungGenerationSizeMb: Math.min(64, this.memoryMb / 4) },
      stdout: true,
      stderr: true,
    });
    // a worker stopped after a timeout may still report its end: it is no longer listened to
    w.on('error', () => {});
    return w;
  }

  async run(options: DecoderOptions, bytes: Uint8Array, pieces: number[]): Promise<Verdict> {
    if (!this.worker) {
      this.worker = this.spawn();
      // the first job loads and compiles the decoder: not counted against the budget
      const warm = await this.send({ id: this.next++, options: { format: 'csv', data: ['d'], bitRate: 1 }, bytes: new TextEncoder().encode('time,d\n0,1\n'), pieces: [64] }, 60_000);
      if (warm.kind !== 'ok') return { kind: 'crash', detail: `the worker did not start: ${warm.detail}` };
    }
    return this.send({ id: this.next++, options, bytes, pieces }, this.timeoutMs);
  }

  private send(job: Job, timeoutMs: number): Promise<Verdict> {
    const w = this.worker!;
    return new Promise((resolve) => {
      const done = (v: Verdict, dead: boolean) => {
        clearTimeout(timer);
        w.off('message', onMessage);
        w.off('error', onError);
        w.off('exit', onExit);
        if (dead) {
          this.worker = null;
          void w.terminate();
        }
        resolve(v);
      };
      const onMessage = (o: Outcome) => {
        if (o.id !== job.id) return;
        done(o.crash ? { kind: 'crash', detail: o.crash } : { kind: 'ok', outcome: o }, false);
      };
      const onError = (e: Error & { code?: string }) =>
        done({ kind: e.code === 'ERR_WORKER_OUT_OF_MEMORY' ? 'memory' : 'crash', detail: `${e.code ?? e.name}: ${e.message}` }, true);
      const onExit = (code: number) => done({ kind: 'crash', detail: `the worker exited with code ${code}` }, true);
      const timer = setTimeout(() => done({ kind: 'hang', detail: `no answer within ${timeoutMs} ms` }, true), timeoutMs);
      w.on('message', onMessage);
      w.on('error', onError);
      w.on('exit', onExit);
      w.postMessage(job);
    });
  }

  async close(): Promise<void> {
    if (this.worker) await this.worker.terminate();
    this.worker = null;
  }
}

/** piece sizes for pushing the input: whole, tiny, odd, random (chunks may split anywhere) */
function piecesFor(r: () => number): number[] {
  const k = Math.floor(r() * 4);
  if (k === 0) return [1 << 20];
  if (k === 1) return [1, 2, 3, 5, 7];
  if (k === 2) return [4093];
  return Array.from({ length: 16 }, () => 1 + Math.floor(r() * r() * 3000));
}

export async function fuzz(o: FuzzOptions): Promise<FuzzResult> {
  const started = performance.now();
  const log = o.log ?? (() => {});
  const seeds = loadSeeds(o.root, o.headBytes).filter((s) => !o.formats || o.formats.includes(s.format));
  const runner = new Runner(o.timeoutMs ?? 5000, o.memoryMb ?? 256, o.workerEntry);
  const failures: Failure[] = [];
  let refused = 0;
  let withFrames = 0;
  try {
    for (let i = 0; i < o.cases; i++) {
      const seed = seeds[i % seeds.length];
      const r = rng(o.seed * 1_000_003 + i);
      const c = mutate(r, seed);
      const pieces = piecesFor(r);
      const v = await runner.run(c.options, c.bytes, pieces);
      if (v.kind === 'ok') {
        if (v.outcome.fatal) refused++;
        if (v.outcome.frames > 0) withFrames++;
        continue;
      }
      log(`case ${i} (${seed.name}: ${c.steps.join('; ')}): ${v.kind}; shrinking…`);
      const bytes = o.minimize === false ? c.bytes : await shrink(runner, c.options, c.bytes, pieces, v.kind, seed, o.shrinkAttempts ?? 40);
      failures.push({ kind: v.kind, seed: seed.name, caseIndex: i, steps: c.steps, options: c.options, bytes, originalLength: c.bytes.length, detail: v.detail });
      if (o.stopWhen?.(failures)) return { cases: i + 1, failures, refused, withFrames, ms: performance.now() - started };
    }
  } finally {
    await runner.close();
  }
  return { cases: o.cases, failures, refused, withFrames, ms: performance.now() - started };
}

/**
 * Shrinks a failing input: the shortest failing prefix and then suffix (by halving), then whole lines (text) or
 * blocks (binary) left out while it still fails the same way, within a budget of decodes.
 */
async function shrink(runner: Runner, options: DecoderOptions, bytes: Uint8Array, pieces: number[], kind: FailureKind, seed: Seed, budget: number): Promise<Uint8Array> {
  let attempts = budget;
  const fails = async (b: Uint8Array) => attempts-- > 0 && (await runner.run(options, b, pieces)).kind === kind;
  let best = bytes;
  // a prefix
  let lo = 0;
  let hi = best.length;
  while (hi - lo > Math.max(1, best.length >> 6) && attempts > 0) {
    const mid = (lo + hi) >> 1;
    if (await fails(best.subarray(0, mid))) hi = mid;
    else lo = mid;
  }
  if (hi < best.length) best = best.slice(0, hi);
  // then a suffix of it (the cause is often the prefix's last line; a VCD needs its header, and keeps it)
  lo = 0;
  hi = best.length;
  while (hi - lo > Math.max(1, best.length >> 6) && attempts > 0) {
    const mid = (lo + hi) >> 1;
    if (await fails(best.subarray(mid))) lo = mid;
    else hi = mid;
  }
  if (lo > 0) best = best.slice(lo);
  // pieces left out, largest first
  const text = seed.format === 'vcd' || seed.format === 'csv' || seed.format === 'framelog';
  let units: Uint8Array[] = text ? splitKeep(best) : blocks(best, 256);
  for (let size = units.length >> 1; size >= 1 && attempts > 0; size >>= 1) {
    for (let at = 0; at + size <= units.length && attempts > 0; ) {
      const without = [...units.slice(0, at), ...units.slice(at + size)];
      const b = concat(without);
      if (b.length > 0 && (await fails(b))) units = without;
      else at += size;
    }
  }
  const shrunk = concat(units);
  return shrunk.length < best.length ? shrunk : best;
}

function splitKeep(bytes: Uint8Array): Uint8Array[] {
  const out: Uint8Array[] = [];
  let from = 0;
  for (let i = 0; i < bytes.length; i++) {
    if (bytes[i] === 10) {
      out.push(bytes.subarray(from, i + 1));
      from = i + 1;
    }
  }
  if (from < bytes.length) out.push(bytes.subarray(from));
  return out;
}

function blocks(bytes: Uint8Array, size: number): Uint8Array[] {
  const out: Uint8Array[] = [];
  for (let i = 0; i < bytes.length; i += size) out.push(bytes.subarray(i, i + size));
  return out;
}

function concat(parts: Uint8Array[]): Uint8Array {
  const out = new Uint8Array(parts.reduce((n, p) => n + p.length, 0));
  let at = 0;
  for (const p of parts) {
    out.set(p, at);
    at += p.length;
  }
  return out;
}

/** A failure in words, with the input shown (text escaped, binary in hex) and saved to a file. */
export function describeFailure(f: Failure, save = true): string {
  const printable = f.bytes.every((b) => b === 9 || b === 10 || b === 13 || (b >= 32 && b < 127));
  const shown = printable
    ? JSON.stringify(new TextDecoder('latin1').decode(f.bytes.subarray(0, 4000)))
    : Buffer.from(f.bytes.subarray(0, 2048)).toString('hex');
  let saved = '';
  if (save) {
    const path = join(tmpdir(), `flagline-fuzz-${f.seed}-${f.caseIndex}.bin`);
    writeFileSync(path, f.bytes);
    saved = `\n  saved to ${path}`;
  }
  const cut = f.bytes.length > (printable ? 4000 : 2048) ? ' (cut)' : '';
  return [
    `${f.kind.toUpperCase()} in case ${f.caseIndex} from ${f.seed}: ${f.steps.join('; ')}`,
    `  ${f.detail.split('\n')[0]}`,
    `  options ${JSON.stringify(f.options)}`,
    `  minimal input, ${f.bytes.length} of ${f.originalLength} bytes${cut}: ${shown}${saved}`,
  ].join('\n');
}
