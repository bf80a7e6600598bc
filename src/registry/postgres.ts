/**
 * The registry on PostgreSQL 15+: opening it (a node-postgres pool, drizzle over it with schema-pg.ts, the
 * migrations of drizzle-pg/ applied), and its transactions.
 *
 * Opening. `openPostgres(url)` checks the URL's scheme (`postgres://` or `postgresql://`), connects once to learn
 * the server's version (15 or later, as the migrations need: `EXECUTE FUNCTION` triggers, identity columns), and
 * brings the schema up to date. Several processes may open a fresh database at once: the migration runs under a
 * session-level advisory lock of its own key (not the write lock's), so one process migrates and the others,
 * once they get the lock, find nothing left to apply. A database already up to date is recognised from drizzle's
 * migration table without taking the lock. A server that cannot be reached, refuses the user or its password, or
 * has no such database is an EnvironmentError naming the URL with its password masked (`redactUrl`).
 *
 * Transactions. Every write is `pgWriteTransaction(handle, fn)`: a client checked out of the pool, BEGIN at READ
 * COMMITTED, `SELECT nkledger_write_lock()` (drizzle-pg/0001: one transaction-scoped advisory lock, so writers on
 * any number of servers run one at a time, as SQLite's BEGIN IMMEDIATE makes them; schema-pg.ts says why READ
 * COMMITTED), then `fn`, COMMIT — or ROLLBACK when `fn` throws — and the client goes back to the pool. While `fn`
 * runs, `handle.db` is a drizzle instance bound to that client (an AsyncLocalStorage keeps it for `fn`'s
 * asynchronous calls), so code that queries `handle.db` inside the transaction sees its uncommitted rows and code
 * outside it (another request served meanwhile) reads through the pool and does not. A write transaction begun
 * inside another one of the same handle joins it as a SAVEPOINT, as nested writes do on SQLite. A transaction
 * that PostgreSQL aborts with a serialization failure (40001) or a deadlock (40P01) is run again from the start,
 * a few times: `fn` must therefore do only database work (nothing it cannot repeat). Waiting for the write lock
 * is bounded (`lockTimeoutMs`, as SQLite's busy timeout): past it the write is refused as `registry-busy`.
 * `pgReadSnapshot` runs reads in one REPEATABLE READ, READ ONLY transaction: one consistent view for `verify`.
 */
import { AsyncLocalStorage } from 'node:async_hooks';
import { readFileSync } from 'node:fs';
import { fileURLToPath } from 'node:url';
import { drizzle, type NodePgDatabase } from 'drizzle-orm/node-postgres';
import { migrate } from 'drizzle-orm/node-postgres/migrator';
import pg from 'pg';
import { EnvironmentError, InputError } from '../errors.ts';
import { driverError, pgCommitFault, pgConnectFault, pgEnvironmentFault, pgFault } from './postgres-faults.ts';
import * as schemaPg from './schema-pg.ts';

/** The PostgreSQL migrations folder of this package (not of the current directory). */
export const PG_MIGRATIONS_FOLDER = fileURLToPath(new URL('../../drizzle-pg', import.meta.url));

/** The oldest PostgreSQL the registry runs on (server_version_num of 15.0). */
export const MIN_SERVER_VERSION_NUM = 150000;

/** Key of the session-level advisory lock held while migrating: the bytes of "nkschema" as a bigint. */
export const MIGRATION_LOCK_KEY = '7956580037470547297';

export const DEFAULT_POOL_SIZE = 10;
/** How long a connection attempt may take before the server counts as unreachable, in ms. */
export const DEFAULT_CONNECT_TIMEOUT_MS = 5000;
/** How long a writer waits for another writer's lock before giving up, in ms (SQLite's BUSY_TIMEOUT_MS). */
export const DEFAULT_LOCK_TIMEOUT_MS = 5000;
/** How many times a transaction aborted by a serialization failure or a deadlock is run again. */
export const TRANSACTION_RETRIES = 4;

export type PgDb = NodePgDatabase<typeof schemaPg>;

/** An open PostgreSQL registry. */
export interface PgRegistry {
  readonly dialect: 'postgres';
  /** The URL as given, with its password masked: safe for messages and logs. */
  readonly url: string;
  readonly pool: pg.Pool;
  /**
   * Drizzle for queries: inside `pgWriteTransaction`/`pgReadSnapshot` of this handle, the one bound to the
   * transaction's client; elsewhere the pool's (each query on any free connection, committed at once). Read it
   * where the query is made (`handle.db.select()…`), not into a variable kept across a transaction's edge.
   */
  readonly db: PgDb;
  /** The pool's drizzle, whatever transaction is running. */
  readonly poolDb: PgDb;
  /** server_version_num, e.g. 150004. */
  readonly serverVersion: number;
  /** How many migrations this open applied (0 when the database was up to date). */
  readonly migrationsApplied: number;
  /** How long a writer waits for the write lock, in ms. */
  readonly lockTimeoutMs: number;
  /** Write transactions of this handle committed so far (the `own` change counter, postgres-changes.ts). */
  commits(): number;
  /** Run `close` when the handle closes (listeners, timers); returns a function that takes it off again. */
  onClose(close: () => Promise<void> | void): () => void;
  /** Close what `onClose` registered, then end the pool. Idempotent. */
  close(): Promise<void>;
}

export interface PgOpenOptions {
  /** Connections in the pool (default 10). A write transaction holds one until it ends. */
  poolSize?: number;
  connectTimeoutMs?: number;
  lockTimeoutMs?: number;
  /** Apply the migrations (default true); false only checks the server. */
  migrate?: boolean;
  /**
   * Refuse a database that holds no registry yet (InputError `registry-missing`), before migrating anything: read
   * commands must not turn an empty database into a registry (a typo in its name must not make `verify` say "ok").
   */
  existingOnly?: boolean;
  /** application_name of the connections, shown in pg_stat_activity (default "nkledger"). */
  applicationName?: string;
}

/** True for a `postgres://` or `postgresql://` URL (the CLI's `--db` picks the backend by it). */
export function isPostgresUrl(value: string): boolean {
  return /^postgres(?:ql)?:\/\//i.test(value);
}

const PASSWORD_PARAMS = /^(password|sslpassword|passfile|sslkey)$/i;

/**
 * The URL with its password masked as `***` — in the user part and in a `password=` query parameter — so it can
 * be named in messages and logs. Text that does not parse as a URL is masked by pattern.
 */
export function redactUrl(url: string): string {
  let parsed: URL;
  try {
    parsed = new URL(url);
  } catch {
    return url.replace(/(\/\/[^:/@?#]*):[^@/?#]*@/, '$1:***@').replace(/([?&](?:ssl)?password=)[^&#]*/gi, '$1***');
  }
  if (parsed.password) parsed.password = '***';
  for (const key of [...parsed.searchParams.keys()]) if (PASSWORD_PARAMS.test(key)) parsed.searchParams.set(key, '***');
  // URLSearchParams percent-encodes the mask: keep it readable.
  return parsed.toString().replace(/%2A%2A%2A/g, '***');
}

function newestMigration(): number {
  const journal = JSON.parse(readFileSync(`${PG_MIGRATIONS_FOLDER}/meta/_journal.json`, 'utf8')) as { entries: { when: number }[] };
  return journal.entries.reduce((newest, entry) => Math.max(newest, entry.when), 0);
}

async function hasMigrationTable(client: pg.PoolClient): Promise<boolean> {
  const { rows } = await client.query<{ found: boolean }>(`SELECT to_regclass('drizzle.__drizzle_migrations') IS NOT NULL AS found`);
  return rows[0].found;
}

/** The newest applied migration's time stamp (drizzle's `created_at`) and how many were applied; 0, 0 before the first. */
async function applied(client: pg.PoolClient): Promise<{ upTo: number; count: number }> {
  if (!(await hasMigrationTable(client))) return { upTo: 0, count: 0 };
  const { rows } = await client.query<{ at: string | null; n: string }>(
    'SELECT max(created_at)::text AS at, count(*) AS n FROM drizzle.__drizzle_migrations',
  );
  return { upTo: Number(rows[0].at ?? 0), count: Number(rows[0].n) };
}

/**
 * Apply drizzle-pg/'s migrations on `client` under the migration lock. Returns how many were applied here (0 when
 * another process had applied them, or none were due).
 */
async function applyMigrations(client: pg.PoolClient): Promise<number> {
  if ((await applied(client)).upTo >= newestMigration()) return 0;
  await client.query('SELECT pg_advisory_lock($1::bigint)', [MIGRATION_LOCK_KEY]);
  try {
    const before = (await applied(client)).count;
    await migrate(drizzle(client, { schema: schemaPg }), { migrationsFolder: PG_MIGRATIONS_FOLDER });
    return (await applied(client)).count - before;
  } finally {
    await client.query('SELECT pg_advisory_unlock($1::bigint)', [MIGRATION_LOCK_KEY]);
  }
}

/**
 * A client out of the pool with a listener for its 'error' event: a checked-out client whose connection the server
 * ends (restart, pg_terminate_backend) emits one, and without a listener the process would stop. The query in
 * flight fails on its own; `release` hands the client back, or destroys it when its connection is broken.
 */
export async function checkout(pool: pg.Pool): Promise<{ client: pg.PoolClient; release: (broken?: boolean) => void }> {
  const client = await pool.connect();
  let failed = false;
  const onError = () => {
    failed = true;
  };
  client.on('error', onError);
  return {
    client,
    release: (broken = false) => {
      client.off('error', onError);
      client.release(broken || failed);
    },
  };
}

/** What is bound to a transaction: its handle, client, drizzle and savepoint count. */
interface TxScope {
  handle: PgRegistry;
  client: pg.PoolClient;
  db: PgDb;
  savepoints: number;
  readOnly: boolean;
}

/** The transactions running in this asynchronous context, one per handle (a transaction of one handle may run inside another's). */
const scope = new AsyncLocalStorage<ReadonlyMap<PgRegistry, TxScope>>();

/** The transaction of `handle` running in this asynchronous context, if any. */
function currentScope(handle: PgRegistry): TxScope | undefined {
  return scope.getStore()?.get(handle);
}

/** Run `body` with `tx` bound to its handle, keeping the bindings of other handles' transactions around it. */
function bound<T>(tx: TxScope, body: () => Promise<T>): Promise<T> {
  const around = scope.getStore();
  const next = new Map(around ?? []);
  next.set(tx.handle, tx);
  return scope.run(next, body);
}

/** True inside a transaction of `handle` (pgWriteTransaction or pgReadSnapshot). */
export function inPgTransaction(handle: PgRegistry): boolean {
  return currentScope(handle) !== undefined;
}

/**
 * Open the PostgreSQL registry at `url`: the pool, a check of the server, the migrations. Refuses a URL of
 * another scheme (InputError `registry-url`); a server that cannot be reached or used is an EnvironmentError
 * (exit 4) whose message names the URL without its password.
 */
export async function openPostgres(url: string, options: PgOpenOptions = {}): Promise<PgRegistry> {
  const shown = redactUrl(url);
  if (!isPostgresUrl(url)) {
    throw new InputError(
      'registry-url',
      `not a PostgreSQL URL: ${shown} (expected postgres://USER@HOST:PORT/DATABASE)`,
      {},
      {
        option: 'db',
        value: shown,
      },
    );
  }
  const poolSize = options.poolSize ?? DEFAULT_POOL_SIZE;
  if (!Number.isInteger(poolSize) || poolSize < 1) {
    throw new InputError(
      'registry-pool-size',
      `the pool size must be a whole number of 1 or more, not ${poolSize}`,
      {},
      {
        option: 'pool_size',
        value: String(poolSize),
      },
    );
  }
  let pool: pg.Pool;
  try {
    pool = new pg.Pool({
      connectionString: url,
      max: poolSize,
      connectionTimeoutMillis: options.connectTimeoutMs ?? DEFAULT_CONNECT_TIMEOUT_MS,
      application_name: options.applicationName ?? 'nkledger',
    });
  } catch (err) {
    throw new InputError(
      'registry-url',
      `cannot read the PostgreSQL URL ${shown}: ${(err as Error).message}`,
      {},
      {
        option: 'db',
        value: shown,
      },
    );
  }
  // An idle connection the server ends (a restart, pg_terminate_backend) is reported here; the pool drops it and
  // the next query opens another. Without a listener the process would stop on the 'error' event.
  pool.on('error', () => {});
  let client: pg.PoolClient;
  let release: (broken?: boolean) => void;
  try {
    ({ client, release } = await checkout(pool));
  } catch (err) {
    await pool.end().catch(() => {});
    throw pgConnectFault(err, shown);
  }
  let serverVersion: number;
  let migrationsApplied = 0;
  try {
    const { rows } = await client.query<{ v: string }>('SELECT current_setting($1) AS v', ['server_version_num']);
    serverVersion = Number(rows[0].v);
    if (!(serverVersion >= MIN_SERVER_VERSION_NUM)) {
      const { rows: shownVersion } = await client.query<{ v: string }>('SHOW server_version');
      throw new EnvironmentError(
        'registry-server-too-old',
        `registry ${shown}: the server runs PostgreSQL ${shownVersion[0].v}; nkledger needs PostgreSQL 15 or later (nothing was written)`,
      );
    }
    if (options.existingOnly && !(await hasMigrationTable(client))) {
      throw new InputError('registry-missing', 'no registry in this database', { file: shown });
    }
    if (options.migrate !== false) migrationsApplied = await applyMigrations(client);
    release();
  } catch (err) {
    release(true);
    await pool.end().catch(() => {});
    const code = sqlState(err);
    // A table, type or function of the same name made by something else: not a database to put the registry in.
    if (code === '42P07' || code === '42710' || code === '42723') {
      throw new InputError(
        'registry-open',
        `registry ${shown}: the database holds tables or functions nkledger did not make (${(driverError(err) as Error).message}); give an empty database or an nkledger registry`,
        {},
        { option: 'db', value: shown },
      );
    }
    throw pgEnvironmentFault(err, shown) ?? err;
  }
  const poolDb = drizzle(pool, { schema: schemaPg });
  const closers = new Set<() => Promise<void> | void>();
  let commits = 0;
  let closed: Promise<void> | null = null;
  const handle: PgRegistry = {
    dialect: 'postgres',
    url: shown,
    pool,
    get db() {
      return currentScope(handle)?.db ?? poolDb;
    },
    poolDb,
    serverVersion,
    migrationsApplied,
    lockTimeoutMs: options.lockTimeoutMs ?? DEFAULT_LOCK_TIMEOUT_MS,
    commits: () => commits,
    onClose(close) {
      closers.add(close);
      return () => closers.delete(close);
    },
    close() {
      closed ??= (async () => {
        for (const close of [...closers]) await Promise.resolve(close()).catch(() => {});
        closers.clear();
        await pool.end();
      })();
      return closed;
    },
  };
  commitCounters.set(handle, () => {
    commits++;
  });
  return handle;
}

/** How pgWriteTransaction bumps a handle's commit count (kept off the public interface). */
const commitCounters = new WeakMap<PgRegistry, () => void>();

/** SQLSTATEs after which the whole transaction is run again: serialization_failure, deadlock_detected. */
const RETRYABLE = new Set(['40001', '40P01']);

const sqlState = (err: unknown): string | undefined => {
  const code = (driverError(err) as { code?: unknown } | null)?.code;
  return typeof code === 'string' ? code : undefined;
};

async function savepoint<T>(current: TxScope, body: () => Promise<T>): Promise<T> {
  const name = `nk_${++current.savepoints}`;
  await current.client.query(`SAVEPOINT ${name}`);
  try {
    const result = await body();
    await current.client.query(`RELEASE SAVEPOINT ${name}`);
    return result;
  } catch (err) {
    await current.client.query(`ROLLBACK TO SAVEPOINT ${name}`).catch(() => {});
    throw err;
  }
}

/** One attempt: check out, BEGIN, `setup`, body, COMMIT/ROLLBACK, release. */
async function attempt<T>(handle: PgRegistry, begin: string, setup: string[], readOnly: boolean, body: () => Promise<T>): Promise<T> {
  let client: pg.PoolClient;
  let release: (broken?: boolean) => void;
  try {
    ({ client, release } = await checkout(handle.pool));
  } catch (err) {
    throw pgConnectFault(err, handle.url);
  }
  let broken = false;
  try {
    await client.query(begin);
    try {
      for (const statement of setup) await client.query(statement);
      const db = drizzle(client, { schema: schemaPg });
      const result = await bound({ handle, client, db, savepoints: 0, readOnly }, body);
      try {
        await client.query('COMMIT');
      } catch (err) {
        if (!isConnectionError(err)) throw err;
        broken = true;
        throw pgCommitFault(err, handle.url);
      }
      return result;
    } catch (err) {
      if (broken) throw err;
      try {
        await client.query('ROLLBACK');
      } catch {
        // the connection is gone, and the server rolled the transaction back itself
        broken = true;
      }
      throw err;
    }
  } catch (err) {
    // A connection the server ended is not given back to the pool for the next transaction.
    if (isConnectionError(err)) broken = true;
    throw err;
  } finally {
    release(broken);
  }
}

/** A fault of the connection itself (class 08, the server shutting down, a socket error), not of a statement. */
function isConnectionError(err: unknown): boolean {
  const code = sqlState(err) ?? '';
  return /^(08|57P0)/.test(code) || /^E[A-Z]+$/.test(code) || /Connection terminated/.test((driverError(err) as Error | null)?.message ?? '');
}

async function run<T>(handle: PgRegistry, begin: string, setup: string[], readOnly: boolean, body: () => Promise<T>): Promise<T> {
  for (let tries = 0; ; tries++) {
    try {
      return await attempt(handle, begin, setup, readOnly, body);
    } catch (err) {
      if (tries < TRANSACTION_RETRIES && RETRYABLE.has(sqlState(err) ?? '')) {
        // A short, growing, random pause, so the transactions that collided do not collide again.
        await new Promise((resolve) => setTimeout(resolve, (tries + 1) * 5 + Math.random() * 10));
        continue;
      }
      throw pgFault(err, handle.url);
    }
  }
}

/**
 * Run `fn` as one write transaction under the registry's write lock (see the top of this file); `handle.db`
 * inside `fn` is the transaction's. Inside another transaction of `handle`, a savepoint of it (refused inside
 * a read-only snapshot). Faults of the environment become EnvironmentErrors; anything else `fn` or the database
 * throws (a trigger's refusal, SQLSTATE 23000) is thrown unchanged, after the rollback.
 */
export async function pgWriteTransaction<T>(handle: PgRegistry, fn: () => Promise<T>): Promise<T> {
  const current = currentScope(handle);
  if (current) {
    if (current.readOnly) throw new Error('pgWriteTransaction inside pgReadSnapshot: a read-only snapshot cannot write');
    return savepoint(current, fn);
  }
  const setup = [`SET LOCAL lock_timeout = ${Math.max(1, Math.round(handle.lockTimeoutMs))}`, 'SELECT nkledger_write_lock()'];
  const result = await run(handle, 'BEGIN ISOLATION LEVEL READ COMMITTED', setup, false, fn);
  commitCounters.get(handle)?.();
  return result;
}

/**
 * Run `fn`'s reads in one REPEATABLE READ, READ ONLY transaction: every query sees the registry as of its first
 * one, and a write is refused by the server (SQLSTATE 25006). No write lock: writers go on meanwhile. Inside a
 * transaction of `handle`, `fn` just runs in it.
 */
export async function pgReadSnapshot<T>(handle: PgRegistry, fn: () => Promise<T>): Promise<T> {
  if (currentScope(handle)) return fn();
  return run(handle, 'BEGIN ISOLATION LEVEL REPEATABLE READ, READ ONLY', [], true, fn);
}
