// Prepared Drizzle statements kept per database handle and query shape: a read service builds
// its query once per shape (placeholders for every value), then runs it with each request's values.
import type { Db } from './client';

const byDb = new WeakMap<object, Map<string, unknown>>();

/** shapes of user filters are many; past this many a handle's statements are dropped and prepared again */
const MAX_PER_DB = 500;

/**
 * The statement of `key` on `db`, prepared by `build` on first use. One key must always build the
 * same SQL (a key names the query and every choice that changes its text, never a value).
 */
export function prepared<T>(db: Db, key: string, build: () => T): T {
  let statements = byDb.get(db);
  if (!statements) {
    statements = new Map();
    byDb.set(db, statements);
  }
  let s = statements.get(key) as T | undefined;
  if (s === undefined) {
    s = build();
    if (statements.size >= MAX_PER_DB) statements.clear();
    statements.set(key, s);
  }
  return s;
}
