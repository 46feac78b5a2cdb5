import session from 'express-session';
import { eq, lt, sql } from 'drizzle-orm';
import type { Db } from '../db/client';
import { prepared } from '../db/prepared';
import { sessions } from '../db/schema';

const ph = sql.placeholder;

const DEFAULT_TTL_MS = 14 * 24 * 60 * 60 * 1000;
const CLEANUP_INTERVAL_MS = 15 * 60 * 1000;
/**
 * The cookie's expiry slides on every response; the stored one is moved only when it lags by more
 * than this. Otherwise every GET would be a write (an fsync, and a wait for the write lock while a
 * decode worker holds it) for an expiry that moves by seconds out of fourteen days.
 */
const TOUCH_EVERY_MS = 60 * 60 * 1000;
const REMEMBERED_SESSIONS = 10_000;

type Callback = (err?: unknown) => void;

/** express-session store on the `sessions` table, so sign-ins survive a server restart. */
export class SqliteSessionStore extends session.Store {
  private timer: NodeJS.Timeout;
  /** the expiry last read or written per session id, so touch() knows when a write is due */
  private readonly storedExpiry = new Map<string, number>();

  constructor(private readonly db: Db) {
    super();
    this.clearExpired();
    this.timer = setInterval(() => this.clearExpired(), CLEANUP_INTERVAL_MS);
    this.timer.unref();
  }

  private expiry(sess: session.SessionData): number {
    const expires = sess.cookie?.expires;
    if (expires) return new Date(expires).getTime();
    return Date.now() + (sess.cookie?.maxAge ?? DEFAULT_TTL_MS);
  }

  private remember(sid: string, expiresAt: number): void {
    if (this.storedExpiry.size >= REMEMBERED_SESSIONS && !this.storedExpiry.has(sid)) this.storedExpiry.clear();
    this.storedExpiry.set(sid, expiresAt);
  }

  clearExpired(): number {
    return this.db.delete(sessions).where(lt(sessions.expiresAt, Date.now())).run().changes;
  }

  // get runs on every request and set/touch on many: prepared once per database handle, so a
  // request does not pay for Drizzle building the same SQL again
  private readonly find = () =>
    prepared(this.db, 'session by sid', () => this.db.select().from(sessions).where(eq(sessions.sid, ph('sid'))).prepare());
  private readonly remove = () =>
    prepared(this.db, 'session delete', () => this.db.delete(sessions).where(eq(sessions.sid, ph('sid'))).prepare());
  private readonly upsert = () =>
    prepared(this.db, 'session upsert', () =>
      this.db
        .insert(sessions)
        .values({ sid: ph('sid'), data: ph('data'), expiresAt: ph('expiresAt') })
        .onConflictDoUpdate({ target: sessions.sid, set: { data: sql`excluded.data`, expiresAt: sql`excluded.expires_at` } })
        .prepare(),
    );
  private readonly moveExpiry = () =>
    prepared(this.db, 'session touch', () =>
      // update's set takes no bare placeholder in Drizzle's typings; one inside a sql fragment binds as is
      this.db.update(sessions).set({ expiresAt: sql<number>`${ph('expiresAt')}` }).where(eq(sessions.sid, ph('sid'))).prepare(),
    );

  get(sid: string, cb: (err: unknown, session?: session.SessionData | null) => void): void {
    try {
      const row = this.find().get({ sid });
      if (!row) return cb(null, null);
      if (row.expiresAt < Date.now()) {
        this.remove().run({ sid });
        this.storedExpiry.delete(sid);
        return cb(null, null);
      }
      this.remember(sid, row.expiresAt);
      cb(null, JSON.parse(row.data) as session.SessionData);
    } catch (err) {
      cb(err);
    }
  }

  set(sid: string, sess: session.SessionData, cb?: Callback): void {
    try {
      const data = JSON.stringify(sess);
      const expiresAt = this.expiry(sess);
      this.upsert().run({ sid, data, expiresAt });
      this.remember(sid, expiresAt);
      cb?.();
    } catch (err) {
      cb?.(err);
    }
  }

  destroy(sid: string, cb?: Callback): void {
    try {
      this.remove().run({ sid });
      this.storedExpiry.delete(sid);
      cb?.();
    } catch (err) {
      cb?.(err);
    }
  }

  touch(sid: string, sess: session.SessionData, cb?: Callback): void {
    try {
      const expiresAt = this.expiry(sess);
      const stored = this.storedExpiry.get(sid);
      if (stored !== undefined && expiresAt - stored < TOUCH_EVERY_MS) return cb?.();
      this.moveExpiry().run({ sid, expiresAt });
      this.remember(sid, expiresAt);
      cb?.();
    } catch (err) {
      cb?.(err);
    }
  }

  close(): void {
    clearInterval(this.timer);
  }
}
