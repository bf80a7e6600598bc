/**
 * Transactions on a registry's one connection. Reads and writes are asynchronous (so a PostgreSQL pool can
 * serve them too), but a better-sqlite3 Registry holds a single connection: two transactions begun on it at
 * once would share it. So every transaction of a Registry waits its turn on a promise chain (an async mutex)
 * before its BEGIN, and the callback runs inside an AsyncLocalStorage scope that marks it as the holder:
 * a transaction started from inside another one on the same Registry (a nested call) does not queue behind
 * itself (which would deadlock) but runs as a SAVEPOINT of the outer one, as better-sqlite3's nested
 * transactions did: its failure rolls back its own writes and is thrown to the outer callback.
 *
 * The callback must await only database work on this registry: no network, no worker pool, no timers.
 * Every other transaction of the process waits meanwhile. Reads outside a transaction are not queued: on
 * better-sqlite3 each statement runs at once, so a callback that awaits only database work finishes within
 * one turn of the event loop, but a read from another promise chain that resumes between two of its
 * statements runs on the same connection and sees them before the commit. A read that needs a consistent
 * view of several statements uses `readTransaction`.
 *
 * On PostgreSQL (registry.pg) both go to postgres.ts: `immediateTransaction` is `pgWriteTransaction` (the
 * write lock nkledger_write_lock() across servers, savepoints when nested) and `readTransaction` is
 * `pgReadSnapshot` (REPEATABLE READ, READ ONLY); there is no queue, the pool serves transactions at once.
 */
import { AsyncLocalStorage } from 'node:async_hooks';
import type { Registry } from './open.ts';
import type * as Postgres from './postgres.ts';

/** postgres.ts, handed over by open.ts when it opens a PostgreSQL registry (so this module never loads the driver itself). */
let postgres: typeof Postgres | undefined;

export function usePostgresTransactions(module: typeof Postgres): void {
  postgres = module;
}

function pgModule(): typeof Postgres {
  if (!postgres) throw new Error('a PostgreSQL registry must be opened through openRegistry');
  return postgres;
}

interface Scope {
  registry: Registry;
  savepoints: number;
}

const scope = new AsyncLocalStorage<Scope>();
const queues = new WeakMap<Registry, Promise<void>>();

/** Run `task` after every task queued on `registry` before it has settled, one at a time. */
function queued<T>(registry: Registry, task: () => Promise<T>): Promise<T> {
  const before = queues.get(registry) ?? Promise.resolve();
  const result = before.then(task);
  queues.set(
    registry,
    result.then(
      () => undefined,
      () => undefined,
    ),
  );
  return result;
}

/** True inside a transaction of `registry` (a write then joins it as a savepoint). */
export function inTransaction(registry: Registry): boolean {
  if (registry.pg) return pgModule().inPgTransaction(registry.pg);
  return scope.getStore()?.registry === registry;
}

async function savepoint<T>(registry: Registry, current: Scope, body: () => Promise<T>): Promise<T> {
  const name = `nk_${++current.savepoints}`;
  registry.sqlite.exec(`SAVEPOINT ${name}`);
  try {
    const result = await body();
    registry.sqlite.exec(`RELEASE ${name}`);
    return result;
  } catch (err) {
    if (registry.sqlite.inTransaction) {
      registry.sqlite.exec(`ROLLBACK TO ${name}`);
      registry.sqlite.exec(`RELEASE ${name}`);
    }
    throw err;
  }
}

async function transaction<T>(registry: Registry, begin: string, body: () => Promise<T>): Promise<T> {
  const current = scope.getStore();
  if (current?.registry === registry) return savepoint(registry, current, body);
  return queued(registry, () =>
    scope.run({ registry, savepoints: 0 }, async () => {
      registry.sqlite.exec(begin);
      try {
        const result = await body();
        registry.sqlite.exec('COMMIT');
        return result;
      } catch (err) {
        try {
          if (registry.sqlite.inTransaction) registry.sqlite.exec('ROLLBACK');
        } catch {
          // SQLite rolled back by itself (a full disk, an I/O error): the original error says why
        }
        throw err;
      }
    }),
  );
}

/**
 * `body` as one transaction that takes the write lock at its start (SQLite's BEGIN IMMEDIATE), after this
 * registry's earlier transactions; inside another transaction of this registry, a savepoint of it. No checks:
 * records.ts `writeTransaction` is the one every change goes through.
 */
export function immediateTransaction<T>(registry: Registry, body: () => Promise<T>): Promise<T> {
  if (registry.pg) return pgModule().pgWriteTransaction(registry.pg, body);
  return transaction(registry, 'BEGIN IMMEDIATE', body);
}

/** `body` as one read transaction (a consistent snapshot across its statements), queued like a write. */
export function readTransaction<T>(registry: Registry, body: () => Promise<T>): Promise<T> {
  if (registry.pg) return pgModule().pgReadSnapshot(registry.pg, body);
  return transaction(registry, 'BEGIN DEFERRED', body);
}
