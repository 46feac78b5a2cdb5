// A small pool of worker threads, each with its own read-only connection to the database file
// (server/db/read-worker.ts). Long reads (timeline pages, filters, searches, counts, export
// chunks) run there, so the request thread only routes, checks access and writes the answer; WAL
// lets these readers run beside the request thread's connection and the decode's writer. A read
// comes back as the text of its JSON answer, so the stringify leaves the request thread too.
import os from 'node:os';
import { Worker } from 'node:worker_threads';
import { HttpError } from '../http/errors';

/** what a read worker answers: the op's value, or the error it threw (HttpError's status and fields kept); `ready` once, when it can take reads */
export type ReadReply =
  | { id: number; value: unknown }
  | { id: number; error: { status: number; message: string; fields?: Record<string, string> } }
  | { ready: true };
export interface ReadRequest {
  id: number;
  op: string;
  args: unknown;
}
export interface ReadWorkerData {
  dbPath: string;
}

interface Task {
  id: number;
  op: string;
  args: unknown;
  resolve(value: unknown): void;
  reject(err: Error): void;
}
interface Slot {
  worker: Worker;
  /** has loaded its code and opened its connection: reads go only to ready workers, so the budget times the read alone */
  ready: boolean;
  task: Task | null;
  timer: NodeJS.Timeout | null;
}

/** FLAGLINE_READ_THREADS when set (0 = reads on the request thread, at most 8); else one per core, 1–4 */
export function readThreads(dbPath: string): number {
  // a worker cannot reach an in-memory database
  if (dbPath === ':memory:') return 0;
  const raw = process.env.FLAGLINE_READ_THREADS?.trim();
  if (raw && /^\d+$/.test(raw)) return Math.min(8, Number(raw));
  // tests run reads in-thread unless they ask (each worker loads its code through tsx there)
  if (process.env.VITEST) return 0;
  return Math.min(4, Math.max(1, os.availableParallelism()));
}

/** FLAGLINE_READ_BUDGET_S: seconds one read may take in a worker before it is stopped (default 20) */
export function readBudgetMs(): number {
  const raw = Number(process.env.FLAGLINE_READ_BUDGET_S);
  return (Number.isFinite(raw) && raw > 0 ? raw : 20) * 1000;
}

/** workers that die before they are ready this many times in a row: the pool stops starting them */
const MAX_START_FAILURES = 3;

export class ReadPool {
  private readonly slots: Slot[] = [];
  private readonly queue: Task[] = [];
  private nextId = 1;
  private closed = false;
  private startFailures = 0;
  private broken: string | null = null;
  private readonly budgetMs: number;

  constructor(
    private readonly opts: { dbPath: string; size: number; budgetMs?: number; workerUrl?: URL },
  ) {
    if (opts.dbPath === ':memory:') throw new Error('read workers need the database in a file');
    this.budgetMs = opts.budgetMs ?? readBudgetMs();
    for (let i = 0; i < Math.max(1, opts.size); i++) this.slots.push(this.start());
  }

  get size(): number {
    return this.slots.length;
  }

  /** Runs `op` in a free worker (queued until one is); the value it returns, or its error. */
  run<T>(op: string, args: unknown): Promise<T> {
    if (this.closed) return Promise.reject(new HttpError(503, 'The server is shutting down; try again in a moment'));
    if (this.broken) return Promise.reject(new HttpError(503, this.broken));
    return new Promise<T>((resolve, reject) => {
      this.queue.push({ id: this.nextId++, op, args, resolve: resolve as (v: unknown) => void, reject });
      this.pump();
    });
  }

  async close(): Promise<void> {
    this.closed = true;
    for (const t of this.queue.splice(0)) t.reject(new HttpError(503, 'The server is shutting down; try again in a moment'));
    await Promise.all(
      this.slots.map((s) => {
        if (s.timer) clearTimeout(s.timer);
        s.task?.reject(new HttpError(503, 'The server is shutting down; try again in a moment'));
        s.task = null;
        return s.worker.terminate();
      }),
    );
  }

  private start(): Slot {
    const worker = new Worker(this.opts.workerUrl ?? workerModule(), { workerData: { dbPath: this.opts.dbPath } satisfies ReadWorkerData });
    // an idle pool does not keep the process alive; close() ends the workers
    worker.unref();
    const slot: Slot = { worker, ready: false, task: null, timer: null };
    worker.on('message', (reply: ReadReply) => {
      if ('ready' in reply) {
        slot.ready = true;
        this.startFailures = 0;
        this.pump();
        return;
      }
      const task = slot.task;
      if (!task || reply.id !== task.id) return;
      if (slot.timer) clearTimeout(slot.timer);
      slot.task = null;
      slot.timer = null;
      if ('error' in reply) {
        const e = reply.error;
        // a refusal (400, 404) keeps its status; anything else is a server error, logged as such
        task.reject(e.status < 500 ? new HttpError(e.status, e.message, e.fields) : new Error(`read worker: ${e.message}`));
      } else task.resolve(reply.value);
      this.pump();
    });
    const gone = (why: string) => {
      if (this.slots.indexOf(slot) < 0) return;
      if (slot.timer) clearTimeout(slot.timer);
      const task = slot.task;
      slot.task = null;
      if (this.closed) return;
      if (!slot.ready && ++this.startFailures >= MAX_START_FAILURES) {
        this.broken = `The server's read workers cannot start (${why}); see the server log`;
        console.error(`[flagline] read workers stopped starting: ${why}`);
      }
      task?.reject(new Error(`The read worker stopped: ${why}`));
      this.replace(slot);
    };
    worker.on('error', (err) => gone(err.message));
    worker.on('exit', (code) => gone(`exit code ${code}`));
    return slot;
  }

  /** a new worker in the slot's place (the old one may still be finishing a native call: it is left to end) */
  private replace(slot: Slot): void {
    const i = this.slots.indexOf(slot);
    if (i < 0) return;
    if (this.broken) {
      for (const t of this.queue.splice(0)) t.reject(new HttpError(503, this.broken));
      this.slots.splice(i, 1);
      return;
    }
    this.slots[i] = this.start();
    this.pump();
  }

  private pump(): void {
    for (const slot of this.slots) {
      if (this.queue.length === 0) return;
      if (slot.task || !slot.ready) continue;
      const task = this.queue.shift()!;
      slot.task = task;
      // the watchdog: a read that has not answered within the budget is stuck (or far too long
      // for a request); it fails with a message, and its worker is replaced so the pool goes on
      slot.timer = setTimeout(() => {
        if (slot.task !== task) return;
        slot.task = null;
        slot.timer = null;
        task.reject(
          new HttpError(503, `This read took longer than ${Math.round(this.budgetMs / 100) / 10} s and was stopped. Narrow the filters or the time range, or try again when the server is less busy`),
        );
        // a worker inside a native SQLite call ends when the call returns; its slot is taken now
        const old = slot.worker;
        old.removeAllListeners('message');
        old.removeAllListeners('exit');
        old.on('error', () => {});
        void old.terminate();
        this.replace(slot);
      }, this.budgetMs);
      slot.worker.postMessage({ id: task.id, op: task.op, args: task.args } satisfies ReadRequest);
    }
  }
}

/**
 * The worker module: compiled, the bundle beside this one that the build names (`define`). From
 * sources, a JavaScript entry that registers tsx, so the TypeScript worker runs under `tsx` and
 * vitest alike.
 */
function workerModule(): URL {
  const bundled = typeof BUNDLED_READ_WORKER === 'string' ? BUNDLED_READ_WORKER : undefined;
  return new URL(bundled ?? './read-worker-entry.mjs', import.meta.url);
}

/** replaced by the server build (server/cli/server-build.mjs, esbuild `define`); undeclared when run from sources */
declare const BUNDLED_READ_WORKER: string | undefined;
