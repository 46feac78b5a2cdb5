// The frame search index is built after a decode run becomes visible. Until it reaches the run's
// last frame, a search must still find every frame (the frames not yet indexed are searched
// directly), a server started after a worker stopped half way finishes the index, and removing
// the run removes exactly the entries that exist.
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { dropSearchEntries, indexSearch } from '../../server/runs/search-index';
import { buildWorld, closeWorld, put, recoveredRaw, reopenWorld, upload, waitForJob, type World } from './captures-helpers';

const rawSettings = {
  format: 'raw',
  sampleRate: 8e6,
  channelNames: ['tx', 'rx'],
  clock: null,
  links: [{ channel: 'tx' }, { channel: 'rx' }],
  bitRate: 1_000_000,
  encoding: 'nrzi',
  edge: 'rising',
};

interface RunIndex {
  jobId: number;
  lo: number;
  hi: number;
  indexedTo: number;
  lastFrameId: number;
}

describe('search while the index is being built', () => {
  let w: World;
  let url = '';
  const cap = recoveredRaw(300);
  const run = (): RunIndex =>
    w.handle.sqlite
      .prepare(
        `select j.id as jobId, (select min(id) from frames where job_id = j.id) as lo, (select max(id) from frames where job_id = j.id) as hi,
           j.search_indexed_to as indexedTo, j.last_frame_id as lastFrameId from captures c join decode_jobs j on j.id = c.current_job_id where c.id = ?`,
      )
      .get(Number(url.split('/').at(-1))) as RunIndex;
  /** entries of the index that answer a term, over every run */
  const indexHits = (term: string) => (w.handle.sqlite.prepare('select count(*) as n from frame_search where text like ?').get(`%${term}%`) as { n: number }).n;
  const count = async (query: string) => {
    const res = await w.viewer.get(`${url}/timeline/count?events=0&${query}`);
    expect(res.status).toBe(200);
    return res.body.count as number;
  };
  const firstPage = async (query: string) => {
    const res = await w.viewer.get(`${url}/timeline?events=0&limit=500&${query}`);
    expect(res.status).toBe(200);
    return (res.body.rows as { seq: number; link: string }[]).map((r) => `${r.link}:${r.seq}`);
  };
  // a rare term (one frame), a common one (every request) and a hex pattern
  const searches = ['text=file0042', 'text=.DAT', 'hex=46494c45'];
  const expected = new Map<string, number>();

  beforeAll(async () => {
    w = await buildWorld();
    const res = await upload(w.analyst, w.rigId, cap.file, 'search.bin');
    url = `/api/rigs/${w.rigId}/captures/${res.body.id}`;
    expect((await put(w.analyst, `${url}/settings`, rawSettings)).status).toBe(200);
    expect((await w.analyst.post(`${url}/decode`)).status).toBe(202);
    expect(await waitForJob(w.viewer, url)).toMatchObject({ state: 'done', frames: cap.sent.length });
    await w.app.jobs.idle();
    for (const q of searches) expected.set(q, await count(q));
  }, 120_000);
  afterAll(() => closeWorld(w));

  it('is complete once the worker is done, with the run\'s last frame id recorded', async () => {
    const r = run();
    expect(r.lastFrameId).toBe(r.hi);
    expect(r.indexedTo).toBe(r.hi);
    expect(expected.get('text=file0042')).toBe(cap.sent.filter((s) => s.text.includes('FILE0042')).length);
    expect(expected.get('text=.DAT')).toBe(cap.sent.filter((s) => s.text.includes('.DAT')).length);
    expect(expected.get('hex=46494c45')).toBeGreaterThan(0);
    expect(indexHits('file0042')).toBe(expected.get('text=file0042'));
  });

  it('finds every frame while none or part of the run is indexed, and a restarted server finishes the index', async () => {
    const r = run();
    const pages = new Map<string, string[]>();
    for (const q of searches) pages.set(q, await firstPage(q));
    // as a worker stopped right after the switch leaves it: nothing of the run in the index
    dropSearchEntries(w.handle.sqlite, r.jobId, r.lo, r.hi);
    w.handle.sqlite.prepare('update decode_jobs set search_indexed_to = ? where id = ?').run(r.lo - 1, r.jobId);
    expect(indexHits('file0042')).toBe(0);
    for (const q of searches) {
      expect(await count(q), q).toBe(expected.get(q));
      expect(await firstPage(q), q).toEqual(pages.get(q));
    }
    // half way
    const mid = Math.floor((r.lo + r.hi) / 2);
    indexSearch(w.handle.sqlite, r.jobId, { range: { lo: r.lo, hi: mid } });
    expect(run().indexedTo).toBe(mid);
    for (const q of searches) {
      expect(await count(q), q).toBe(expected.get(q));
      expect(await firstPage(q), q).toEqual(pages.get(q));
    }

    // a new server on the same database finishes the index beside its requests
    await w.app.jobs.close();
    w.app.close();
    w.handle.close();
    w = await reopenWorld(w);
    await w.app.jobs.idle();
    expect(run().indexedTo).toBe(r.hi);
    expect(indexHits('file0042')).toBe(expected.get('text=file0042'));
    for (const q of searches) expect(await count(q), q).toBe(expected.get(q));
  });

  it('removes exactly the entries of a half-indexed run with the capture', async () => {
    const r = run();
    dropSearchEntries(w.handle.sqlite, r.jobId, Math.floor((r.lo + r.hi) / 2) + 1, r.hi);
    w.handle.sqlite.prepare('update decode_jobs set search_indexed_to = ? where id = ?').run(Math.floor((r.lo + r.hi) / 2), r.jobId);
    expect((await w.owner.delete(url)).status).toBe(204);
    await w.app.jobs.idle();
    expect(indexHits('FILE')).toBe(0);
    // the index is still consistent: its own integrity check passes
    expect(() => w.handle.sqlite.prepare("insert into frame_search (frame_search, rank) values ('integrity-check', 1)").run()).not.toThrow();
  });
});
