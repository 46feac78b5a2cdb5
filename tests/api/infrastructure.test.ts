import { afterEach, describe, expect, it, vi } from 'vitest';
import { openDb, type DbHandle } from '../../server/db/client';
import { SqliteSessionStore } from '../../server/auth/session-store';
import { anonymous, makeUser, signedIn, testApp } from './helpers';
import type { SessionData } from 'express-session';

let handle: DbHandle | undefined;
afterEach(() => handle?.close());

const sessionData = (expires: Date) => ({ cookie: { expires, originalMaxAge: 1000 } }) as unknown as SessionData;
const getAsync = (store: SqliteSessionStore, sid: string) =>
  new Promise<SessionData | null | undefined>((resolve, reject) => store.get(sid, (err, s) => (err ? reject(err) : resolve(s))));

describe('session store', () => {
  it('stores, reads, touches (at most hourly) and destroys sessions', async () => {
    handle = openDb(':memory:');
    const store = new SqliteSessionStore(handle.db);
    const later = new Date(Date.now() + 60_000);
    store.set('a', { ...sessionData(later), csrfToken: 'x' } as SessionData);
    expect((await getAsync(store, 'a'))?.csrfToken).toBe('x');
    const storedExpiry = () => (handle!.sqlite.prepare('select expires_at as e from sessions').get() as { e: number }).e;
    // an expiry that moved by less than an hour is not worth a write on every request
    store.touch('a', sessionData(new Date(later.getTime() + 60_000)));
    expect(storedExpiry()).toBe(later.getTime());
    const muchLater = new Date(Date.now() + 2 * 3_600_000);
    store.touch('a', sessionData(muchLater));
    expect(storedExpiry()).toBe(muchLater.getTime());
    store.destroy('a');
    expect(await getAsync(store, 'a')).toBeNull();
    store.close();
  });

  it('treats expired sessions as absent and clears them', async () => {
    handle = openDb(':memory:');
    const store = new SqliteSessionStore(handle.db);
    store.set('old', sessionData(new Date(Date.now() - 1)));
    store.set('old2', sessionData(new Date(Date.now() - 1)));
    store.set('new', sessionData(new Date(Date.now() + 60_000)));
    expect(await getAsync(store, 'old')).toBeNull();
    expect(store.clearExpired()).toBe(1);
    expect(handle.sqlite.prepare('select sid from sessions').all()).toEqual([{ sid: 'new' }]);
    store.close();
  });
});

describe('error handling', () => {
  it('answers an oversized body with 413', async () => {
    const app = await testApp();
    const c = await anonymous(app);
    const res = await c.post('/api/session', { email: 'a@example.test', password: 'x'.repeat(200_000) }).expect(413);
    expect(res.body).toEqual({ error: 'The request body is too large' });
    app.close();
  });

  it('answers an unexpected failure with a generic 500 and no stack trace', async () => {
    const app = await testApp();
    await makeUser(app, 'ada@example.test');
    const c = await signedIn(app, 'ada@example.test');
    const log = vi.spyOn(console, 'error').mockImplementation(() => {});
    app.db.sqlite.exec('drop table memberships');
    const res = await c.get('/api/rigs').expect(500);
    expect(res.body).toEqual({ error: 'Something went wrong on the server; the error was logged' });
    expect(JSON.stringify(res.body)).not.toMatch(/at .*\.ts/);
    expect(log).toHaveBeenCalled();
    log.mockRestore();
    app.close();
  });
});
