/**
 * Opening the registry database: better-sqlite3 with WAL, foreign keys and a busy timeout, and the
 * committed drizzle migrations applied (idempotently) on every open.
 */
import Database from 'better-sqlite3';
import { drizzle, type BetterSQLite3Database } from 'drizzle-orm/better-sqlite3';
import { migrate } from 'drizzle-orm/better-sqlite3/migrator';
import { accessSync, constants, existsSync, readFileSync, statSync } from 'node:fs';
import { dirname, join, resolve } from 'node:path';
import { fileURLToPath } from 'node:url';
import { EnvironmentError, InputError } from '../errors.ts';
import { ensureGenesis } from './chain.ts';
import { environmentFault } from './faults.ts';
import { setPgCounters } from './hot-reads.ts';
import { usePostgresTransactions } from './transaction.ts';
import type { PgRegistry } from './postgres.ts';
import * as sqliteSchema from './schema.ts';
import * as sqliteAuthSchema from './schema-auth.ts';

/**
 * The registry's tables as the query builder needs them for the registry's dialect: schema.ts and
 * schema-auth.ts on SQLite, schema-pg.ts on PostgreSQL. Typed as SQLite's; the PostgreSQL twins have the same
 * JS keys and values (schema-pg.ts), so the same query code builds the right SQL for either.
 */
export interface RegistryTables {
  materials: typeof sqliteSchema.materials;
  materialVersions: typeof sqliteSchema.materialVersions;
  auditLog: typeof sqliteSchema.auditLog;
  registrySettings: typeof sqliteSchema.registrySettings;
  apiTokens: typeof sqliteAuthSchema.apiTokens;
  webSessions: typeof sqliteAuthSchema.webSessions;
  webPendingUploads: typeof sqliteAuthSchema.webPendingUploads;
}

const SQLITE_TABLES: RegistryTables = {
  materials: sqliteSchema.materials,
  materialVersions: sqliteSchema.materialVersions,
  auditLog: sqliteSchema.auditLog,
  registrySettings: sqliteSchema.registrySettings,
  apiTokens: sqliteAuthSchema.apiTokens,
  webSessions: sqliteAuthSchema.webSessions,
  webPendingUploads: sqliteAuthSchema.webPendingUploads,
};

/** Which database holds the registry. */
export type Dialect = 'sqlite' | 'postgres';

/** The migrations folder of this package (not of the current directory). */
export const MIGRATIONS_FOLDER = fileURLToPath(new URL('../../drizzle', import.meta.url));

/** How long a writer waits for another process's write lock before giving up, in ms. */
export const BUSY_TIMEOUT_MS = 5000;

/**
 * An open registry: the drizzle handle for queries, the raw better-sqlite3 handle for transactions and backup
 * (SQLite), or the PostgreSQL handle (postgres.ts). Query code reads `registry.db` and `registry.tables` and
 * awaits query builders (never `.run()`/`.get()`/`.all()`, which only SQLite's drizzle has), so one text serves
 * both dialects; raw SQL goes through sql.ts, which dispatches.
 */
export interface Registry {
  readonly dialect: Dialect;
  /** Path of the database file as opened; on PostgreSQL, the URL with its password masked. */
  readonly path: string;
  /**
   * Drizzle for queries. On PostgreSQL the node-postgres drizzle of `pg.db` (bound to the running transaction),
   * typed as SQLite's so the same query code compiles: use only what both have.
   */
  readonly db: BetterSQLite3Database;
  /** The better-sqlite3 handle; reading it on a PostgreSQL registry throws (SQLite-only code reached). */
  readonly sqlite: Database.Database;
  /** The PostgreSQL handle, or null on SQLite. */
  readonly pg: PgRegistry | null;
  /** The tables of this registry's dialect, for the query builder. */
  readonly tables: RegistryTables;
  /** Opened read-only (asked for, or the file or its folder is not writable): reads work, writes are refused. */
  readonly readonly: boolean;
  /** True when this open created the database file. */
  readonly created: boolean;
  /** Device and inode of the file when opened, to notice it being removed or replaced (null for :memory: and PostgreSQL). */
  readonly identity: FileIdentity | null;
  /** Close the database (SQLite: at once; PostgreSQL: the pool and its listeners, when the promise settles). */
  close(): Promise<void>;
}

export interface FileIdentity {
  dev: number;
  ino: number;
}

export interface OpenOptions {
  /**
   * When the file does not exist: 'always' creates it (the default, for programs and tests), 'never'
   * refuses (read commands), 'if-folder-exists' creates it only inside an existing folder (`material add`,
   * `import`).
   */
  create?: 'always' | 'never' | 'if-folder-exists';
  /** Open read-only: no WAL switch, no migration; writes are refused with an EnvironmentError. */
  readonly?: boolean;
}

/**
 * The database path: the argument, else ./nkledger.db. The caller passes what its user chose; the CLI fills
 * `--db` from its run's NKLEDGER_DB (cli/run.ts), so the registry never reads the process environment.
 */
export function registryPath(path?: string): string {
  return path ?? 'nkledger.db';
}

/**
 * True when `path` names a PostgreSQL database (`postgres://` or `postgresql://`), not a file: the same test as
 * postgres.ts `isPostgresUrl`, here so that callers need not load the driver to ask.
 */
export function isDatabaseUrl(path: string): boolean {
  return /^postgres(?:ql)?:\/\//i.test(path);
}

function identityOf(file: string): FileIdentity | null {
  if (file === ':memory:' || file === '') return null;
  const st = statSync(file);
  return { dev: st.dev, ino: st.ino };
}

function writable(file: string): boolean {
  try {
    accessSync(file, constants.W_OK);
    return true;
  } catch {
    return false;
  }
}

/**
 * Open the registry at `registryPath(path)` and bring its schema up to date, creating the file as
 * `options.create` allows. Safe to call from several processes at once on a fresh file: a migration that
 * loses the race to another process is re-checked and skipped. A file that is not writable is opened
 * read-only: it serves reads, and writes are refused.
 */
export async function openRegistry(path?: string, options: OpenOptions = {}): Promise<Registry> {
  const file = registryPath(path);
  if (isDatabaseUrl(file)) return openPostgresRegistry(file, options);
  const memory = file === ':memory:';
  const exists = memory || existsSync(file);
  const create = options.create ?? 'always';
  if (!exists && create === 'never') {
    throw new InputError('registry-missing', 'no registry database at this path', { file });
  }
  if (!exists && create === 'if-folder-exists' && !existsSync(dirname(resolve(file)))) {
    throw new InputError(
      'registry-folder-missing',
      `no folder ${dirname(resolve(file))} to create the registry ${file} in (create the folder first)`,
      { file },
    );
  }
  // A file in a folder that may not be written cannot be written either: SQLite must create its -wal/-shm
  // (or -journal) files beside it.
  const readonly = options.readonly === true || (exists && !memory && (!writable(file) || !writable(dirname(resolve(file)))));
  let sqlite: Database.Database;
  try {
    sqlite = readonly ? openReadOnly(file) : new Database(file);
  } catch (err) {
    throw environmentFault(err, file) ?? new InputError('registry-open', `cannot open the registry database: ${(err as Error).message}`, { file });
  }
  try {
    sqlite.pragma(`busy_timeout = ${BUSY_TIMEOUT_MS}`);
    sqlite.pragma('foreign_keys = ON');
    const db = drizzle(sqlite);
    if (readonly) {
      requireCurrentSchema(sqlite, file);
    } else {
      sqlite.pragma('journal_mode = WAL');
      applyMigrations(db, sqlite);
    }
    const registry = sqliteRegistry(sqlite, file, { readonly, created: !exists });
    if (!readonly) await ensureGenesis(registry);
    return registry;
  } catch (err) {
    sqlite.close();
    if ((err as { code?: string }).code === 'SQLITE_NOTADB') {
      throw new InputError('registry-open', 'not an nkledger registry (not an SQLite database)', { file });
    }
    throw environmentFault(err, file) ?? err;
  }
}

/** A Registry over an open better-sqlite3 handle whose schema is current (openRegistry; tests and benchmarks on :memory:). */
export function sqliteRegistry(sqlite: Database.Database, file: string, flags: { readonly: boolean; created: boolean }): Registry {
  return {
    dialect: 'sqlite',
    path: file,
    db: drizzle(sqlite),
    sqlite,
    pg: null,
    tables: SQLITE_TABLES,
    readonly: flags.readonly,
    created: flags.created,
    identity: identityOf(file),
    close: async () => {
      sqlite.close();
    },
  };
}

/**
 * Open the registry on PostgreSQL (postgres.ts, loaded only now so that commands on SQLite files never load the
 * driver). There is no file to create: `options.create` does not apply (the database must exist; the schema is
 * created in it: a missing database is `registry-database-missing`, exit 4); `create: 'never'` refuses a database
 * that holds no registry yet (`registry-missing`), the other modes create its tables. With `readonly` the schema is still
 * brought up to date but no genesis event is written, and writes are refused as on a read-only file.
 */
async function openPostgresRegistry(url: string, options: OpenOptions): Promise<Registry> {
  const [postgres, schemaPg, { pgChangeCounters }] = await Promise.all([
    import('./postgres.ts'),
    import('./schema-pg.ts'),
    import('./postgres-changes.ts'),
  ]);
  usePostgresTransactions(postgres);
  // Read commands do not turn an empty database into a registry (create 'never': registry-missing).
  const pg = await postgres.openPostgres(url, { existingOnly: (options.create ?? 'always') === 'never' });
  const tables = {
    materials: schemaPg.materials,
    materialVersions: schemaPg.materialVersions,
    auditLog: schemaPg.auditLog,
    registrySettings: schemaPg.registrySettings,
    apiTokens: schemaPg.apiTokens,
    webSessions: schemaPg.webSessions,
    webPendingUploads: schemaPg.webPendingUploads,
  } as unknown as RegistryTables;
  const registry: Registry = {
    dialect: 'postgres',
    path: pg.url,
    get db() {
      return pg.db as unknown as BetterSQLite3Database;
    },
    get sqlite(): Database.Database {
      throw new Error('SQLite-only code reached on a PostgreSQL registry');
    },
    pg,
    tables,
    readonly: options.readonly === true,
    created: pg.migrationsApplied > 0,
    identity: null,
    close: () => pg.close(),
  };
  // One LISTEN connection per handle, made when a server first asks (a CLI command never does); closed with the pool.
  let counters: ReturnType<typeof pgChangeCounters> | undefined;
  setPgCounters(registry, () => {
    counters ??= pgChangeCounters(pg);
    return counters;
  });
  try {
    if (!registry.readonly) await ensureGenesis(registry);
  } catch (err) {
    await pg.close().catch(() => {});
    throw err;
  }
  return registry;
}

/**
 * Open read-only. A registry in WAL mode is read through its -shm index file, which SQLite creates if it does
 * not exist: in a folder that may not be written (a read-only share, a mounted snapshot) that fails with
 * SQLITE_READONLY_DIRECTORY or _CANTOPEN, and SQLite offers no other way in through better-sqlite3 (no URI
 * `immutable` option in its build). Then, when no -wal file holds changes the main file lacks, the file's
 * bytes are read whole and opened as an in-memory copy (marked as rollback-journal mode in the copy's header,
 * which in-memory databases need); nobody can commit to the file meanwhile, since a writer would need that
 * folder too. With a non-empty -wal the copy would miss its changes: refused, saying why.
 */
function openReadOnly(file: string): Database.Database {
  const sqlite = new Database(file, { readonly: true, fileMustExist: true });
  try {
    sqlite.prepare('SELECT 1 FROM sqlite_master LIMIT 1').get(); // the first read opens the WAL index
    return sqlite;
  } catch (err) {
    sqlite.close();
    const code = (err as { code?: string }).code;
    if ((code !== 'SQLITE_READONLY_DIRECTORY' && code !== 'SQLITE_CANTOPEN') || writable(dirname(resolve(file)))) throw err;
  }
  let walBytes = 0;
  try {
    walBytes = statSync(`${file}-wal`).size;
  } catch {
    // no -wal file: everything committed is in the main file
  }
  if (walBytes > 0) {
    throw new EnvironmentError(
      'registry-read-only',
      `registry ${file}: its folder is read-only and ${file}-wal holds changes not yet in the main file, which SQLite cannot read without creating ${file}-shm there; ` +
        'open it once from an account that may write the folder (closing it folds the changes in), or copy the registry with its -wal file elsewhere (nothing was written)',
    );
  }
  const bytes = readFileSync(file);
  // Header bytes 18 and 19 (file format write and read versions, sqlite.org/fileformat.html §1.3.4): 2 = WAL, 1 = rollback.
  if (bytes.length >= 100 && bytes[18] === 2 && bytes[19] === 2) bytes[18] = bytes[19] = 1;
  return new Database(bytes, { readonly: true });
}

/**
 * Is the file still the one this registry opened? False when the path was removed, renamed away or
 * replaced by another file (a restore copied over it): writes would then go to a file nobody will see again.
 * One stat call.
 */
export function stillSameFile(registry: Registry): boolean {
  if (registry.dialect === 'postgres' || !registry.identity) return true;
  try {
    const st = statSync(registry.path);
    return st.dev === registry.identity.dev && st.ino === registry.identity.ino;
  } catch {
    return false;
  }
}

/**
 * Copy the live database to `file` with SQLite's online backup API, every page in one step (see
 * service/registry-admin.ts `backup`). SQLite only.
 */
export async function onlineBackup(registry: Registry, file: string, pagesPerStep: number): Promise<{ totalPages: number }> {
  return registry.sqlite.backup(file, { progress: () => pagesPerStep });
}

/**
 * Time stamp of the newest committed migration, from drizzle's journal (the `when` that drizzle's migrator
 * reads as `folderMillis`): one small JSON file, not every SQL file read and hashed as `readMigrationFiles` does.
 */
function newestMigration(): number {
  const journal = JSON.parse(readFileSync(join(MIGRATIONS_FOLDER, 'meta', '_journal.json'), 'utf8')) as { entries: { when: number }[] };
  return journal.entries.reduce((newest, entry) => Math.max(newest, entry.when), 0);
}

/** A read-only registry cannot be migrated: refuse one whose schema is older than this nkledger. */
function requireCurrentSchema(sqlite: Database.Database, file: string): void {
  let applied: number;
  try {
    applied = appliedUpTo(sqlite);
  } catch (err) {
    if ((err as { code?: string }).code === 'SQLITE_ERROR')
      throw new InputError('registry-open', 'not an nkledger registry (no migration table)', { file });
    throw err;
  }
  if (applied < newestMigration()) {
    throw new EnvironmentError(
      'registry-needs-upgrade',
      `registry ${file} is read-only and was written by an older nkledger; open it once with write access so its schema is brought up to date (nothing was written)`,
    );
  }
}

function applyMigrations(db: BetterSQLite3Database, sqlite: Database.Database): void {
  const config = { migrationsFolder: MIGRATIONS_FOLDER };
  const newest = newestMigration();
  // Up to date (drizzle's own test: the newest applied time stamp is not older than the newest migration):
  // nothing to apply, so skip drizzle's migrator, which reads and hashes every migration file and takes the
  // write lock for an empty transaction on every open. A fresh file (no migration table yet) migrates.
  if (appliedUpTo(sqlite, true) >= newest) return;
  for (let attempt = 1; ; attempt++) {
    try {
      migrate(db, config);
      return;
    } catch (err) {
      // Another process applied the same migration between our check and our write: re-check.
      if (appliedUpTo(sqlite) >= newest) return;
      if (attempt >= 3) throw err;
    }
  }
}

/** The newest applied migration's time stamp; with `missingIsZero`, 0 when the migration table does not exist yet. */
function appliedUpTo(sqlite: Database.Database, missingIsZero = false): number {
  if (missingIsZero) {
    const table = sqlite.prepare("SELECT 1 FROM sqlite_master WHERE type = 'table' AND name = '__drizzle_migrations'").get();
    if (!table) return 0;
  }
  const row = sqlite.prepare('SELECT MAX(created_at) AS at FROM __drizzle_migrations').get() as { at: number | null };
  return Number(row.at ?? 0);
}
