/**
 * Raw SQL through drizzle's `sql` template, for the few statements the query builder does not express
 * (aggregates over JSON, the audit chain's plain inserts, sqlite_master). Values go in as `${value}`
 * and become the driver's placeholders; nothing above src/registry/ writes SQL (test/architecture).
 */
import type { SQL } from 'drizzle-orm';
import type { Registry } from './open.ts';

/** Every row `query` returns, as plain objects keyed by column name (or alias). */
export async function queryRows<T>(registry: Registry, query: SQL): Promise<T[]> {
  return registry.db.all<T>(query);
}

/** The first row `query` returns, or undefined. */
export async function queryRow<T>(registry: Registry, query: SQL): Promise<T | undefined> {
  return (await queryRows<T>(registry, query))[0];
}

/** Run a statement that returns no rows (insert, update, delete). */
export async function execute(registry: Registry, query: SQL): Promise<void> {
  registry.db.run(query);
}

/** The first row of a query-builder query (`.limit(1)` it), or undefined: the awaitable form of `.get()`. */
export async function first<T>(query: PromiseLike<T[]>): Promise<T | undefined> {
  return (await query)[0];
}
