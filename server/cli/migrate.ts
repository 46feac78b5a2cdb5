/** `npm run db:migrate`: applies pending migrations from drizzle/ to the database in FLAGLINE_DB. */
import { defaultDbPath, openDb } from '../db/client';

const dbPath = defaultDbPath();
try {
  const handle = openDb(dbPath);
  handle.close();
  console.log(`Migrations applied to ${dbPath}`);
} catch (err) {
  console.error(`Migrating ${dbPath} failed:`, err instanceof Error ? err.message : err);
  process.exit(1);
}
