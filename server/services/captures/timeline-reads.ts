// The timeline's long reads as the text of their JSON answers: a page, a count, an export's next
// chunk. The same functions run on the request thread (tests, in-memory databases,
// FLAGLINE_READ_THREADS=0) and in the read pool's workers (server/db/read-pool.ts), so both give
// the same bytes.
import { createHash } from 'node:crypto';
import type Database from 'better-sqlite3';
import { eq, sql } from 'drizzle-orm';
import type { TimelineQuery } from '../../../shared/schemas';
import type { Db } from '../../db/client';
import { prepared } from '../../db/prepared';
import { ReadPool } from '../../db/read-pool';
import { captures } from '../../db/schema';
import { exportChunk, type ExportChunk, type ExportChunkArgs } from './export';
import { TimelineReader } from './timeline';

export interface PageArgs {
  rigId: number;
  captureId: number;
  q: TimelineQuery;
}
export interface CountArgs {
  captureId: number;
  q: TimelineQuery;
}

/**
 * A JSON answer ready to send: its UTF-8 bytes and the weak ETag Express would give them. Built
 * where the read ran, so the request thread neither encodes nor hashes the text (a 200-row page
 * is about 60 KB), and the bytes move from a worker without a copy.
 */
export interface JsonAnswer {
  body: Uint8Array;
  etag: string;
}

const utf8 = new TextEncoder();

/** the answer for `json`; the ETag as Express's default (the `etag` package, weak): W/"<length hex>-<sha1 base64, 27 chars>" */
export function jsonAnswer(json: string): JsonAnswer {
  const body = utf8.encode(json);
  const hash = createHash('sha1').update(body).digest('base64').substring(0, 27);
  return { body, etag: body.length === 0 ? 'W/"0-2jmj7l5rSw0yVb/vlWAYkK/YBwk"' : `W/"${body.length.toString(16)}-${hash}"` };
}

export interface TimelineReadOps {
  page(a: PageArgs): JsonAnswer;
  count(a: CountArgs): JsonAnswer;
  exportChunk(a: ExportChunkArgs): ExportChunk;
}

/**
 * The reads over one connection. A page or count reads the capture's visible run in the same
 * read transaction as its rows: a decode that switches runs (and the sweep that clears the old
 * one's rows) between the two could otherwise give a page of a half-cleared run.
 */
export function timelineReadOps(db: Db, sqlite: Database.Database): TimelineReadOps {
  const reader = new TimelineReader({ db });
  const visibleRun = (captureId: number): number | null =>
    prepared(db, 'visible run of a capture', () =>
      db.select({ jobId: captures.currentJobId }).from(captures).where(eq(captures.id, sql.placeholder('captureId'))).prepare(),
    ).get({ captureId })?.jobId ?? null;
  const inSnapshot = <A, R>(fn: (a: A) => R) => sqlite.transaction(fn) as unknown as (a: A) => R;
  return {
    page: inSnapshot((a: PageArgs) => jsonAnswer(JSON.stringify(reader.page(a.rigId, visibleRun(a.captureId), a.q)))),
    count: inSnapshot((a: CountArgs) => jsonAnswer(JSON.stringify({ count: reader.count(visibleRun(a.captureId), a.q) }))),
    exportChunk: (a: ExportChunkArgs) => exportChunk({ db }, reader, a),
  };
}

/** The timeline's long reads for the routes: in a read pool when it has threads, else on the request thread. */
export interface TimelineReads {
  /** worker threads answering the reads; 0 on the request thread */
  readonly threads: number;
  page(a: PageArgs): Promise<JsonAnswer>;
  count(a: CountArgs): Promise<JsonAnswer>;
  exportChunk(a: ExportChunkArgs): Promise<ExportChunk>;
  close(): Promise<void>;
}

export function createTimelineReads(opts: { db: Db; sqlite: Database.Database; dbPath: string; threads: number; budgetMs?: number }): TimelineReads {
  if (opts.threads <= 0) {
    const ops = timelineReadOps(opts.db, opts.sqlite);
    return {
      threads: 0,
      page: async (a) => ops.page(a),
      count: async (a) => ops.count(a),
      exportChunk: async (a) => ops.exportChunk(a),
      close: async () => {},
    };
  }
  const pool = new ReadPool({ dbPath: opts.dbPath, size: opts.threads, budgetMs: opts.budgetMs });
  return {
    threads: pool.size,
    page: (a) => pool.run<JsonAnswer>('page', a),
    count: (a) => pool.run<JsonAnswer>('count', a),
    exportChunk: (a) => pool.run<ExportChunk>('exportChunk', a),
    close: () => pool.close(),
  };
}
