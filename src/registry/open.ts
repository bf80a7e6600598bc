/**
 * Opening the registry database: better-sqlite3 with WAL, foreign keys and a busy timeout, and the
 * committed drizzle migrations applied (idempotently) on every open.
 */
import Database from 'better-sqlite3';
import { drizzle, type BetterSQLite3Database } from 'drizzle-orm/better-sqlite3';
import { migrate } from 'drizzle-orm/better-sqlite3/migrator';
import { readMigrationFiles } from 'drizzle-orm/migrator';
import { fileURLToPath } from 'node:url';
import { InputError } from '../errors.ts';

/** The migrations folder of this package (not of the current directory). */
export const MIGRATIONS_FOLDER = fileURLToPath(new URL('../../drizzle', import.meta.url));

/** How long a writer waits for another process's write lock before giving up, in ms. */
export const BUSY_TIMEOUT_MS = 5000;

/** An open registry: the drizzle handle for queries, the raw better-sqlite3 handle for transactions and backup. */
export interface Registry {
  /** Path of the database file as opened. */
  readonly path: string;
  readonly db: BetterSQLite3Database;
  readonly sqlite: Database.Database;
  close(): void;
}

/** The database path: the argument (`--db`), else NKLEDGER_DB, else ./nkledger.db. */
export function registryPath(path?: string): string {
  return path ?? process.env.NKLEDGER_DB ?? 'nkledger.db';
}

/**
 * Open (creating if needed) the registry at `registryPath(path)` and bring its schema up to date.
 * Safe to call from several processes at once on a fresh file: a migration that loses the race
 * to another process is re-checked and skipped.
 */
export function openRegistry(path?: string): Registry {
  const file = registryPath(path);
  let sqlite: Database.Database;
  try {
    sqlite = new Database(file);
  } catch (err) {
    throw new InputError('registry-open', `cannot open the registry database: ${(err as Error).message}`, { file });
  }
  try {
    sqlite.pragma(`busy_timeout = ${BUSY_TIMEOUT_MS}`);
    sqlite.pragma('journal_mode = WAL');
    sqlite.pragma('foreign_keys = ON');
    const db = drizzle(sqlite);
    applyMigrations(db, sqlite);
    return { path: file, db, sqlite, close: () => sqlite.close() };
  } catch (err) {
    sqlite.close();
    if ((err as { code?: string }).code === 'SQLITE_NOTADB') {
      throw new InputError('registry-open', 'not an nkledger registry (not an SQLite database)', { file });
    }
    throw err;
  }
}

function applyMigrations(db: BetterSQLite3Database, sqlite: Database.Database): void {
  const config = { migrationsFolder: MIGRATIONS_FOLDER };
  const newest = Math.max(...readMigrationFiles(config).map((m) => m.folderMillis));
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

function appliedUpTo(sqlite: Database.Database): number {
  const row = sqlite.prepare('SELECT MAX(created_at) AS at FROM __drizzle_migrations').get() as { at: number | null };
  return Number(row.at ?? 0);
}
