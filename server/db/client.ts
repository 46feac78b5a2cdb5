import fs from 'node:fs';
import path from 'node:path';
import { fileURLToPath } from 'node:url';
import Database from 'better-sqlite3';
import { drizzle } from 'drizzle-orm/better-sqlite3';
import type { BaseSQLiteDatabase } from 'drizzle-orm/sqlite-core';
import { migrate } from 'drizzle-orm/better-sqlite3/migrator';
import * as schema from './schema';

/** the database or a transaction on it: services take either, so they compose inside one transaction */
export type Db = BaseSQLiteDatabase<'sync', Database.RunResult, typeof schema>;
export interface DbHandle {
  db: Db;
  sqlite: Database.Database;
  path: string;
  close(): void;
}

/** repository root: server/db/ is two levels below it */
export const repoRoot = path.resolve(path.dirname(fileURLToPath(import.meta.url)), '..', '..');
export const migrationsFolder = path.join(repoRoot, 'drizzle');
export const defaultDbPath = () => process.env.FLAGLINE_DB || path.join(repoRoot, 'data', 'flagline.db');

/** Opens (creating when needed) the SQLite database and applies every pending migration. */
export function openDb(dbPath: string = defaultDbPath()): DbHandle {
  const inMemory = dbPath === ':memory:';
  if (!inMemory) fs.mkdirSync(path.dirname(path.resolve(dbPath)), { recursive: true });
  const sqlite = new Database(dbPath);
  // WAL lets readers proceed while a decode job writes; it does not apply to in-memory databases.
  if (!inMemory) sqlite.pragma('journal_mode = WAL');
  sqlite.pragma('foreign_keys = ON');
  sqlite.pragma('busy_timeout = 5000');
  const db = drizzle(sqlite, { schema });
  migrate(db, { migrationsFolder });
  return {
    db,
    sqlite,
    path: dbPath,
    close: () => {
      if (sqlite.open) sqlite.close();
    },
  };
}
