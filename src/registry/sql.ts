/**
 * Raw SQL through drizzle's `sql` template, for the few statements the query builder does not express
 * (aggregates over JSON, the audit chain's plain inserts, sqlite_master). Values go in as `${value}`
 * and become the driver's placeholders; nothing above src/registry/ writes SQL (test/architecture).
 * On PostgreSQL they go to postgres-sql.ts (int8 counts come back as numbers; booleans stay booleans where
 * SQLite gives 0/1: test them by truthiness). The SQL must then be valid in both dialects, or chosen by
 * `registry.dialect`.
 */
import { type SQL, type SQLWrapper, sql } from 'drizzle-orm';
import type { Registry } from './open.ts';
import { pgExecute, pgQueryRows } from './postgres-sql.ts';

/** Every row `query` returns, as plain objects keyed by column name (or alias). */
export async function queryRows<T>(registry: Registry, query: SQL): Promise<T[]> {
  if (registry.pg) return pgQueryRows<T>(registry.pg, query);
  return registry.db.all<T>(query);
}

/** The first row `query` returns, or undefined. */
export async function queryRow<T>(registry: Registry, query: SQL): Promise<T | undefined> {
  return (await queryRows<T>(registry, query))[0];
}

/** Run a statement that returns no rows (insert, update, delete). */
export async function execute(registry: Registry, query: SQL): Promise<void> {
  if (registry.pg) {
    await pgExecute(registry.pg, query);
    return;
  }
  registry.db.run(query);
}

/** The first row of a query-builder query (`.limit(1)` it), or undefined: the awaitable form of `.get()`. */
export async function first<T>(query: PromiseLike<T[]>): Promise<T | undefined> {
  return (await query)[0];
}

/**
 * `column` for ORDER BY in SQLite's order (binary: by code point, as the SQLite registry sorts text). On
 * PostgreSQL text sorts by the database's collation, which for most locales ignores hyphens and case at first;
 * `COLLATE "C"` sorts by byte, which for UTF-8 is the code-point order.
 */
export function binaryOrder(registry: Registry, column: SQLWrapper): SQL {
  return registry.pg ? sql`${column} COLLATE "C"` : sql`${column}`;
}

/** The COLLATE clause raw SQL puts after a text column in ORDER BY (see binaryOrder); empty on SQLite. */
export function binaryCollate(registry: Registry): SQL {
  return registry.pg ? sql.raw(' COLLATE "C"') : sql.raw('');
}
