import fs from 'node:fs';
import express from 'express';
import request from 'supertest';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { ReadPool, readBudgetMs, readThreads } from '../../server/db/read-pool';
import { HttpError } from '../../server/http/errors';
import type { TimelinePage } from '../../shared/schemas';
import { testApp, signedIn, type Client } from './helpers';
import { buildWorld, clockedVcd, closeWorld, put, upload, waitForJob, type World } from './captures-helpers';
import type { FlaglineApp } from '../../server/index';

const testWorker = new URL('./support/test-read-worker.mjs', import.meta.url);

describe('the read pool', () => {
  const pools: ReadPool[] = [];
  const pool = (opts: { size?: number; budgetMs?: number; dbPath?: string } = {}) => {
    const p = new ReadPool({ dbPath: opts.dbPath ?? 'test.db', size: opts.size ?? 1, budgetMs: opts.budgetMs ?? 10_000, workerUrl: testWorker });
    pools.push(p);
    return p;
  };
  afterAll(async () => {
    await Promise.all(pools.map((p) => p.close()));
  });

  it('answers each read with its own result, queueing beyond the pool size', async () => {
    const p = pool({ size: 2 });
    const answers = await Promise.all(Array.from({ length: 7 }, (_, i) => p.run<{ i: number }>('echo', { i })));
    expect(answers.map((a) => a.i)).toEqual([0, 1, 2, 3, 4, 5, 6]);
  });

  it('keeps a refusal as the same HTTP error; anything else from a worker is a server error', async () => {
    const p = pool();
    const refused = await p.run('refuse', null).catch((e: unknown) => e);
    expect(refused).toBeInstanceOf(HttpError);
    expect(refused).toMatchObject({ status: 400, message: 'Some fields need attention', fields: { cursor: 'not ours' } });
    const unknown = await p.run('nothing', null).catch((e: unknown) => e);
    expect(unknown).not.toBeInstanceOf(HttpError);
    expect((unknown as Error).message).toMatch(/no read named nothing/);
  });

  it('stops a read over its time budget with a 503 that says so, and goes on with a fresh worker', async () => {
    const p = pool({ budgetMs: 300 });
    const t0 = Date.now();
    const stuck = await p.run('stall', null).catch((e: unknown) => e);
    expect(Date.now() - t0).toBeGreaterThanOrEqual(250);
    expect(stuck).toBeInstanceOf(HttpError);
    expect((stuck as HttpError).status).toBe(503);
    expect((stuck as HttpError).message).toMatch(/took longer than 0\.3 s and was stopped/);
    // the reads queued behind it are answered by the replacement
    expect(await Promise.all([p.run('echo', 1), p.run('echo', 2)])).toEqual([1, 2]);
    expect(p.size).toBe(1);
  });

  it('answers a read whose worker dies with a server error and replaces the worker', async () => {
    const p = pool();
    const crashed = await p.run('crash', null).catch((e: unknown) => e);
    expect(crashed).toBeInstanceOf(Error);
    expect((crashed as Error).message).toMatch(/The read worker stopped: exit code 3/);
    expect(await p.run('echo', 'after')).toBe('after');
  });

  it('gives up with a clear 503 when its workers cannot start', async () => {
    const p = pool({ dbPath: 'fail' });
    const errors = [];
    for (let i = 0; i < 3; i++) errors.push(await p.run('echo', i).catch((e: unknown) => e));
    // the first reads wait for workers that die at start; once three did, every read is refused at once
    await new Promise((r) => setTimeout(r, 200));
    const refused = await p.run('echo', 'late').catch((e: unknown) => e);
    expect(refused).toBeInstanceOf(HttpError);
    expect(refused).toMatchObject({ status: 503 });
    expect((refused as HttpError).message).toMatch(/read workers cannot start \(cannot open the database\)/);
    expect(errors.every((e) => e instanceof Error)).toBe(true);
  });

  it('sizes itself from FLAGLINE_READ_THREADS, else the cores (1–4); in-memory databases and tests read in-thread', () => {
    const saved = { threads: process.env.FLAGLINE_READ_THREADS, budget: process.env.FLAGLINE_READ_BUDGET_S };
    try {
      delete process.env.FLAGLINE_READ_THREADS;
      expect(readThreads('data/x.db')).toBe(0); // under vitest
      process.env.FLAGLINE_READ_THREADS = '3';
      expect(readThreads('data/x.db')).toBe(3);
      expect(readThreads(':memory:')).toBe(0);
      process.env.FLAGLINE_READ_THREADS = '0';
      expect(readThreads('data/x.db')).toBe(0);
      process.env.FLAGLINE_READ_THREADS = '99';
      expect(readThreads('data/x.db')).toBe(8);
      delete process.env.FLAGLINE_READ_BUDGET_S;
      expect(readBudgetMs()).toBe(20_000);
      process.env.FLAGLINE_READ_BUDGET_S = '2.5';
      expect(readBudgetMs()).toBe(2500);
    } finally {
      for (const [k, v] of [['FLAGLINE_READ_THREADS', saved.threads], ['FLAGLINE_READ_BUDGET_S', saved.budget]] as const) {
        if (v === undefined) delete process.env[k];
        else process.env[k] = v;
      }
    }
  });
});

describe('timeline reads in the pool and on the request thread', () => {
  let w: World;
  let pooled: FlaglineApp;
  let viaPool: Client;
  let url: string;
  let frameCount: number;
  const savedThreads = process.env.FLAGLINE_READ_THREADS;
  beforeAll(async () => {
    // the world's app reads on the request thread whatever the environment asks
    delete process.env.FLAGLINE_READ_THREADS;
    w = await buildWorld();
    if (savedThreads !== undefined) process.env.FLAGLINE_READ_THREADS = savedThreads;
    const cap = clockedVcd(60);
    frameCount = cap.sent.length;
    const c = (await upload(w.analyst, w.rigId, cap.file, 'pooled.vcd')).body as { id: number };
    url = `/api/rigs/${w.rigId}/captures/${c.id}`;
    const detection = (await w.analyst.get(`${url}/detection`)).body;
    const settings = { ...detection.suggested, handshake: [{ channel: 'rts', name: 'RTS', link: 'tx' }] };
    expect((await put(w.analyst, `${url}/settings`, settings)).status).toBe(200);
    expect((await w.analyst.post(`${url}/decode`)).status).toBe(202);
    expect((await waitForJob(w.viewer, url)).state).toBe('done');
    await w.app.jobs.idle();
    const first = (await w.viewer.get(`${url}/timeline?limit=3&events=0`)).body as TimelinePage;
    expect((await w.viewer.post(`${url}/notes`, { target: { kind: 'frame', frameId: first.rows[1].id }, body: 'pooled marker note' })).status).toBe(201);
    // a second app on the same database file, its timeline reads in two workers
    pooled = await testApp({ db: w.handle, dataDir: w.env.dir, readThreads: 2 });
    viaPool = await signedIn(pooled, 'viewer@example.test');
  }, 60_000);
  afterAll(async () => {
    pooled?.close();
    await closeWorld(w);
  });

  // what res.json answers for the same value: the headers a read's answer must match
  let value = '';
  const plain = express().get('/', (_req, res) => res.json(JSON.parse(value)));
  const same = async (path: string) => {
    const a = await w.viewer.get(path);
    const b = await viaPool.get(path);
    const headers = (r: { headers: Record<string, string> }) => ({ type: r.headers['content-type'], etag: r.headers['etag'] });
    expect({ status: b.status, ...headers(b), text: b.text }, path).toEqual({ status: a.status, ...headers(a), text: a.text });
    if (a.status === 200 && a.headers['content-type'].startsWith('application/json') && !path.includes('/export.')) {
      value = a.text;
      const viaJson = await request(plain).get('/');
      expect({ ...headers(a), text: a.text }, path).toEqual({ ...headers(viaJson), text: viaJson.text });
    }
    return b;
  };

  it('gives the same bytes for pages, filters, searches and counts', async () => {
    const queries = [
      'limit=200',
      'limit=5&events=0',
      'limit=7&direction=backward',
      'limit=50&status=bad-fcs',
      'limit=50&station=33&kind=I',
      'limit=50&command=RR&from=0&to=0.01',
      'limit=50&text=FILE0013',
      'limit=50&text=pooled%20marker',
      'limit=50&text=fi',
      'limit=50&hex=de%20ad%20be%20ef&events=0',
      'limit=50&hex=de%20%3F%3F%20be',
      'limit=50&link=rx',
    ];
    for (const q of queries) {
      const page = await same(`${url}/timeline?${q}`);
      expect(page.status, q).toBe(200);
      await same(`${url}/timeline/count?${q}`);
    }
    const all = (await same(`${url}/timeline/count?events=0`)).body as { count: number };
    expect(all.count).toBe(frameCount);
    // the whole run a page at a time, both ways, following each app's cursors
    for (const dir of ['forward', 'backward']) {
      let next: string | null = `${url}/timeline?limit=23&direction=${dir}`;
      let pages = 0;
      while (next) {
        const body = (await same(next)).body as TimelinePage;
        next = body.nextCursor ? `${url}/timeline?limit=23&cursor=${body.nextCursor}` : null;
        pages++;
      }
      expect(pages).toBeGreaterThan(5);
    }
    const at = (await w.viewer.get(`${url}/timeline/at?t=0.002`)).body.cursor as string;
    await same(`${url}/timeline?limit=10&cursor=${at}`);
  });

  it('gives the same refusals and the same exports', async () => {
    const bad = await same(`${url}/timeline?cursor=bm90LWEtY3Vyc29y`);
    expect(bad.status).toBe(400);
    expect(bad.body.fields.cursor).toMatch(/not one the timeline gave out/);
    expect((await same(`${url}/timeline?limit=0`)).status).toBe(400);
    expect((await same(`/api/rigs/${w.rigId}/captures/999999/timeline`)).status).toBe(404);
    for (const q of ['', '?status=bad-fcs', '?text=FILE00', '?hex=de%20ad']) {
      for (const format of ['csv', 'json']) {
        const res = await same(`${url}/export.${format}${q}`);
        expect(res.status).toBe(200);
      }
    }
    const csv = await viaPool.get(`${url}/export.csv`);
    expect(csv.text.trim().split('\n')).toHaveLength(frameCount + 1);
  });

  it('answered those in worker threads in the pooled app and on the request thread in the other', () => {
    expect(pooled.reads.threads).toBe(2);
    expect(w.app.reads.threads).toBe(0);
    if (process.platform === 'linux') {
      const names = fs.readdirSync('/proc/self/task').map((t) => {
        try {
          return fs.readFileSync(`/proc/self/task/${t}/comm`, 'utf8').trim();
        } catch {
          return '';
        }
      });
      expect(names.filter((n) => n === 'flagline-read')).toHaveLength(2);
    }
  });
});
