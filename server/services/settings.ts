import { randomBytes } from 'node:crypto';
import { eq } from 'drizzle-orm';
import type { Db } from '../db/client';
import { settings } from '../db/schema';

export const getSetting = (db: Db, key: string): string | undefined =>
  db.select().from(settings).where(eq(settings.key, key)).get()?.value;

/** SESSION_SECRET when given; otherwise one random secret per database, made on first start. */
export function sessionSecret(db: Db, fromEnv = process.env.SESSION_SECRET): string {
  if (fromEnv) return fromEnv;
  // insert-or-ignore then read: two processes starting together still agree on one secret
  db.insert(settings)
    .values({ key: 'session_secret', value: randomBytes(32).toString('base64url') })
    .onConflictDoNothing()
    .run();
  return getSetting(db, 'session_secret')!;
}
