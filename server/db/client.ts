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
/** the driver's own handle under a Db: for raw statements (FTS5, bulk inserts) and streamed reads */
export type Driver = Database.Database;

/**
 * The seam while the decode worker hands its driver handle to the run functions it shares with
 * the services (map versions, call run life): those take either and run their Drizzle queries
 * on what this returns, so a service passes its Db. Drop the driver arm once the worker passes a Db.
 */
export function dbOf(h: Db | Driver): Db {
  return h instanceof Database ? drizzle(h, { schema }) : h;
}

/**
 * The driver under a Db opened by openDb, for what Drizzle cannot do: streamed reads
 * (iterateValues), FTS5 statements, and the run stages that still take the driver (the run
 * writer, call stage, fault rows, sweep). A transaction's Db carries no driver: take it outside.
 */
export function driverOf(h: Db | Driver): Driver {
  if (h instanceof Database) return h;
  const client = (h as { $client?: unknown }).$client;
  if (!(client instanceof Database)) throw new Error('driverOf: this Db has no driver handle (a transaction?); take it from the database itself');
  return client;
}

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
