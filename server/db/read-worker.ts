// One thread of the read pool (server/db/read-pool.ts): a read-only connection to the database
// file and the timeline's long reads, answered as their JSON text or an error the request thread
// turns back into the same HTTP answer.
import { parentPort, workerData } from 'node:worker_threads';
import Database from 'better-sqlite3';
import { drizzle } from 'drizzle-orm/better-sqlite3';
import { nameThread } from '../jobs/thread-priority';
import { registerHexMatch } from '../services/captures/hex-pattern';
import { timelineReadOps, type TimelineReadOps } from '../services/captures/timeline-reads';
import { HttpError } from '../http/errors';
import type { ReadReply, ReadRequest, ReadWorkerData } from './read-pool';
import * as schema from './schema';

/** the bytes of an answer ({ body: Uint8Array }) move to the request thread instead of being copied */
function transferable(reply: ReadReply): ArrayBuffer[] {
  const v = 'value' in reply ? (reply.value as { body?: unknown } | null) : null;
  return v && typeof v === 'object' && v.body instanceof Uint8Array && v.body.buffer instanceof ArrayBuffer ? [v.body.buffer] : [];
}

function open(data: ReadWorkerData): TimelineReadOps {
  const sqlite = new Database(data.dbPath, { readonly: true, fileMustExist: true });
  // a reader waits out a checkpoint's brief lock rather than failing
  sqlite.pragma('busy_timeout = 5000');
  registerHexMatch(sqlite);
  return timelineReadOps(drizzle(sqlite, { schema }), sqlite);
}

if (parentPort && workerData) {
  nameThread('flagline-read');
  const port = parentPort;
  const ops = open(workerData as ReadWorkerData);
  port.on('message', (m: ReadRequest) => {
    let reply: ReadReply;
    try {
      const op = ops[m.op as keyof TimelineReadOps] as ((args: unknown) => unknown) | undefined;
      if (!op) throw new Error(`no read named ${m.op}`);
      reply = { id: m.id, value: op(m.args) };
    } catch (err) {
      reply =
        err instanceof HttpError
          ? { id: m.id, error: { status: err.status, message: err.message, fields: err.fields } }
          : { id: m.id, error: { status: 500, message: err instanceof Error ? err.message : String(err) } };
    }
    port.postMessage(reply, transferable(reply));
  });
  port.postMessage({ ready: true } satisfies ReadReply);
}
