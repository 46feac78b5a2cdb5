import fs from 'node:fs';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { decodeNice, DEFAULT_DECODE_NICE, lowerThreadPriority, threadId } from '../../server/jobs/thread-priority';
import { buildWorld, closeWorld, put, recoveredRaw, upload, waitForJob, type World } from './captures-helpers';

const linux = process.platform === 'linux' && fs.existsSync('/proc/thread-self');

/** nice value of each thread of this process, from /proc (field 19 of a task's stat line) */
function threadNices(): Map<number, number> {
  const out = new Map<number, number>();
  for (const tid of fs.readdirSync('/proc/self/task')) {
    try {
      const stat = fs.readFileSync(`/proc/self/task/${tid}/stat`, 'utf8');
      // the fields after the command name (which may hold spaces) start after the last ')'
      const fields = stat.slice(stat.lastIndexOf(')') + 2).split(' ');
      out.set(Number(tid), Number(fields[16]));
    } catch {
      // the thread ended meanwhile
    }
  }
  return out;
}

describe('the decode worker thread priority (FLAGLINE_DECODE_NICE)', () => {
  const saved = process.env.FLAGLINE_DECODE_NICE;
  const restore = () => {
    if (saved === undefined) delete process.env.FLAGLINE_DECODE_NICE;
    else process.env.FLAGLINE_DECODE_NICE = saved;
  };
  afterAll(restore);

  it('reads the setting: 0–19, default 10 (0 under vitest), out-of-range values capped and nonsense ignored', () => {
    const read = (v: string | undefined) => {
      if (v === undefined) delete process.env.FLAGLINE_DECODE_NICE;
      else process.env.FLAGLINE_DECODE_NICE = v;
      return decodeNice();
    };
    expect(read(undefined)).toBe(0);
    const vitest = process.env.VITEST;
    delete process.env.VITEST;
    try {
      expect(read(undefined)).toBe(DEFAULT_DECODE_NICE);
      expect(read('nonsense')).toBe(DEFAULT_DECODE_NICE);
    } finally {
      process.env.VITEST = vitest;
    }
    expect(DEFAULT_DECODE_NICE).toBe(10);
    expect(read('0')).toBe(0);
    expect(read('17')).toBe(17);
    expect(read('40')).toBe(19);
    expect(read('-5')).toBe(0);
    expect(read('high')).toBe(0);
    restore();
  });

  it('leaves the thread as it is for 0', () => {
    expect(lowerThreadPriority(0)).toBeNull();
    if (linux) expect(threadId()).toBeGreaterThan(0);
  });

  describe.skipIf(!linux)('while a decode runs', () => {
    let w: World;
    beforeAll(async () => {
      process.env.FLAGLINE_DECODE_NICE = '13';
      w = await buildWorld();
    });
    afterAll(async () => {
      await closeWorld(w);
      restore();
    });

    it('runs the worker thread at the configured nice value and leaves the request thread alone', async () => {
      const before = threadNices();
      const mainNice = before.get(process.pid)!;
      expect(mainNice).toBeLessThan(13);
      const cap = recoveredRaw(400);
      const c = (await upload(w.analyst, w.rigId, cap.file, 'long.bin')).body as { id: number };
      const url = `/api/rigs/${w.rigId}/captures/${c.id}`;
      const settings = { format: 'raw', sampleRate: 8e6, channelNames: ['tx', 'rx'], clock: null, links: [{ channel: 'tx' }, { channel: 'rx' }], bitRate: 1_000_000, encoding: 'nrzi', edge: 'rising' };
      expect((await put(w.analyst, `${url}/settings`, settings)).status).toBe(200);
      // every thread seen at nice 13 while the run goes on; polled from this (the request) thread
      const niced = new Set<number>();
      let mainSeen = mainNice;
      const poll = setInterval(() => {
        const now = threadNices();
        mainSeen = Math.max(mainSeen, now.get(process.pid)!);
        for (const [tid, nice] of now) if (nice === 13 && !before.has(tid)) niced.add(tid);
      }, 2);
      try {
        expect((await w.analyst.post(`${url}/decode`)).status).toBe(202);
        const job = await waitForJob(w.viewer, url);
        expect(job.state).toBe('done');
      } finally {
        clearInterval(poll);
      }
      expect(niced.size).toBe(1);
      expect(mainSeen).toBe(mainNice);
      // the worker is gone with its run
      await w.app.jobs.idle();
      expect(threadNices().has([...niced][0])).toBe(false);
    }, 60_000);
  });
});
