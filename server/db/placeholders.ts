// A prepared Drizzle insert of one row whose every column (but an autoincrement id) is a
// placeholder named after its column key: `db.insert(t).values(placeholders(t)).prepare()`, then
// `.run(row)` with a typed `$inferInsert` row. Drizzle maps booleans, dates and JSON as usual.
import { getTableColumns, sql } from 'drizzle-orm';
import type { SQLiteTable } from 'drizzle-orm/sqlite-core';

type Placeholder = ReturnType<typeof sql.placeholder>;

export function placeholders<T extends SQLiteTable>(table: T): Record<keyof T['$inferInsert'], Placeholder> {
  const out: Record<string, Placeholder> = {};
  for (const [key, column] of Object.entries(getTableColumns(table))) {
    if (column.primary && column.columnType === 'SQLiteInteger' && (column as unknown as { autoIncrement?: boolean }).autoIncrement) continue;
    out[key] = sql.placeholder(key);
  }
  return out as Record<keyof T['$inferInsert'], Placeholder>;
}

/**
 * A row for such an insert: every column present (null where empty), so a column added to the
 * schema is a type error here rather than a "no value for placeholder" at run time.
 */
export type FullRow<T extends SQLiteTable> = Required<Omit<T['$inferInsert'], 'id'>>;
