/**
 * Raw SQL on the PostgreSQL registry through drizzle's `sql` template (values become $1, $2, …), for the statements
 * the query builder does not express: the twins of registry/sql.ts's helpers on SQLite. Rows come back as plain
 * objects keyed by column name or alias, with the values SQLite's would have: node-postgres reads `bigint` (int8:
 * `count(*)`, `sum` of integers) and `numeric` as text, to lose no digit; here they become numbers, as SQLite
 * gives them. (A count past 2^53 does not occur in a registry.) Booleans stay booleans (SQLite's raw rows hold
 * 0/1: compare with truthiness, or select through drizzle's columns, which map both).
 *
 * Queries run on `handle.db`: inside a transaction of the handle, on its connection (postgres.ts).
 */
import type { SQL } from 'drizzle-orm';
import type { FieldDef, QueryResult } from 'pg';
import type { PgRegistry } from './postgres.ts';

/** pg_type oids of the types read as text that SQLite returns as numbers: int8, numeric. */
const NUMERIC_TEXT_TYPES = new Set([20, 1700]);

function numbersFor(fields: FieldDef[]): string[] {
  return fields.filter((f) => NUMERIC_TEXT_TYPES.has(f.dataTypeID)).map((f) => f.name);
}

/** `rows` with the int8/numeric columns (by `fields`) as numbers; nulls stay null. */
export function numericRows<T>(result: Pick<QueryResult, 'rows' | 'fields'>): T[] {
  const names = numbersFor(result.fields ?? []);
  if (names.length === 0) return result.rows as T[];
  for (const row of result.rows as Record<string, unknown>[]) {
    for (const name of names) {
      const value = row[name];
      if (typeof value === 'string') row[name] = Number(value);
    }
  }
  return result.rows as T[];
}

/** Every row `query` returns. */
export async function pgQueryRows<T>(handle: PgRegistry, query: SQL): Promise<T[]> {
  const result = (await handle.db.execute(query)) as unknown as QueryResult;
  return numericRows<T>(result);
}

/** The first row `query` returns, or undefined. */
export async function pgQueryRow<T>(handle: PgRegistry, query: SQL): Promise<T | undefined> {
  return (await pgQueryRows<T>(handle, query))[0];
}

/** Run a statement that returns no rows; resolves to the number of rows it wrote. */
export async function pgExecute(handle: PgRegistry, query: SQL): Promise<number> {
  const result = (await handle.db.execute(query)) as unknown as QueryResult;
  return result.rowCount ?? 0;
}
