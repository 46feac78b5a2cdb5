// The conditions of a read whose filters vary per request, as Drizzle fragments with placeholders.
import { inArray, sql, type SQL } from 'drizzle-orm';
import type { SQLiteColumn } from 'drizzle-orm/sqlite-core';

/**
 * The conditions of one query as Drizzle fragments whose values are placeholders, and the
 * query's shape: one shape always renders the same SQL, so its prepared statement is reused with
 * each request's values.
 */
export class Conditions {
  readonly parts: SQL[] = [];
  readonly values: Record<string, unknown> = {};
  shape = '';
  private next = 0;

  /** a placeholder standing for one value of this request */
  v(value: unknown) {
    const name = `v${this.next++}`;
    this.values[name] = value;
    return sql.placeholder(name);
  }

  /** a condition; `token` names its SQL text among the query's shapes */
  add(token: string, part: SQL) {
    this.parts.push(part);
    this.shape += `${token};`;
  }

  inList(token: string, column: SQLiteColumn, values: readonly unknown[] | undefined) {
    if (!values || values.length === 0) return;
    this.add(`${token}:${values.length}`, inArray(column, values.map((x) => this.v(x))));
  }
}
