// Rows of a prepared Drizzle select, built from the driver's arrays. Drizzle's own row mapping
// (mapResultRow: type checks and a path walk per cell) cost 0.7 ms on a 201-row timeline page
// here, twice the query itself; the hot reads take `.values()` and map each row with a function
// made once per selection, calling a column's decoder only where it has one (booleans, dates, JSON).
import { Column, is, SQL } from 'drizzle-orm';
import type { SelectResultFields } from 'drizzle-orm/query-builders/select.types';
import { driverOf, type Db, type Driver } from './client';

/** what a hot select may list: columns and typed `sql` fragments, flat */
export type FlatSelection = Record<string, Column | SQL>;
export type RowOf<S extends FlatSelection> = SelectResultFields<S>;

type Decode = ((value: unknown) => unknown) | null;
const mappers = new WeakMap<FlatSelection, (values: unknown[]) => unknown>();

function decoderOf(field: Column | SQL): Decode {
  if (is(field, Column)) {
    // a column class that keeps the base mapping returns the driver's value as it is
    return field.mapFromDriverValue === Column.prototype.mapFromDriverValue ? null : (v) => field.mapFromDriverValue(v);
  }
  if (is(field, SQL)) {
    // the decoder `mapWith` sets (Drizzle's typings mark it internal)
    const decoder = (field as unknown as { decoder: { mapFromDriverValue(v: unknown): unknown } }).decoder;
    return (v) => decoder.mapFromDriverValue(v);
  }
  throw new Error('rows: a hot select lists columns and sql fragments only');
}

function mapperOf<S extends FlatSelection>(selection: S): (values: unknown[]) => RowOf<S> {
  let mapper = mappers.get(selection);
  if (!mapper) {
    // Drizzle selects the fields in the selection's key order, as this reads them
    const keys = Object.keys(selection);
    const decoders = keys.map((k) => decoderOf(selection[k]));
    mapper = (values) => {
      const row: Record<string, unknown> = {};
      for (let i = 0; i < keys.length; i++) {
        const v = values[i];
        const d = decoders[i];
        row[keys[i]] = v === null || d === null ? v : d(v);
      }
      return row;
    };
    mappers.set(selection, mapper);
  }
  return mapper as (values: unknown[]) => RowOf<S>;
}

interface ValuesQuery {
  values(placeholderValues?: Record<string, unknown>): unknown[][];
}

/** every row of a prepared select of `selection` (the same object the query was built with) */
export function allRows<S extends FlatSelection>(stmt: ValuesQuery, selection: S, placeholderValues?: Record<string, unknown>): RowOf<S>[] {
  const map = mapperOf(selection);
  return stmt.values(placeholderValues).map(map);
}

/**
 * A select built by Drizzle, run through the driver with its rows as arrays, one at a time:
 * Drizzle's synchronous selects have no iterator, and some reads (a run's frames) are too long to
 * hold at once. The values come as the driver gives them (no column decoders).
 */
export function iterateValues<T extends unknown[]>(db: Db | Driver, query: { toSQL(): { sql: string; params: unknown[] } }): IterableIterator<T> {
  const { sql, params } = query.toSQL();
  return driverOf(db).prepare(sql).raw().iterate(...params) as IterableIterator<T>;
}
