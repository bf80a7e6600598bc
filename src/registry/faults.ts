/**
 * SQLite's reports of a failing environment (full disk, read-only or corrupt file, I/O error, a lock held
 * too long) turned into EnvironmentErrors that say what happened and that nothing was written. A write
 * is one transaction, so a failed write is rolled back whole; a failed read writes nothing anyway.
 */
import { EnvironmentError } from '../errors.ts';
import { pgEnvironmentFault } from './postgres-faults.ts';

interface Fault {
  rule: string;
  what: string;
}

/** SQLite result codes (sqlite.org/rescode.html) by prefix; extended codes share their primary's meaning. */
const FAULTS: [prefix: string, fault: Fault][] = [
  ['SQLITE_FULL', { rule: 'registry-disk-full', what: 'the disk (or the database size limit) is full' }],
  ['SQLITE_READONLY', { rule: 'registry-read-only', what: 'the database file or its folder is read-only' }],
  ['SQLITE_CORRUPT', { rule: 'registry-corrupt', what: 'the database file is corrupt (restore it from a backup)' }],
  ['SQLITE_NOTADB', { rule: 'registry-corrupt', what: 'the database file is corrupt (restore it from a backup)' }],
  ['SQLITE_IOERR', { rule: 'registry-io-error', what: 'the operating system failed to read or write the database file' }],
  ['SQLITE_CANTOPEN', { rule: 'registry-cannot-open', what: 'the database file (or its -wal/-shm companion) cannot be opened' }],
  ['SQLITE_BUSY', { rule: 'registry-busy', what: 'another process held the registry locked for too long' }],
];

/**
 * The EnvironmentError for a fault of the environment reported by SQLite, or by PostgreSQL or its connection
 * (postgres-faults.ts: unreachable server, refused login, missing database, full disk …) when `file` is the
 * registry's (redacted) postgres:// URL, or null for anything else.
 */
export function environmentFault(err: unknown, file: string): EnvironmentError | null {
  if (err instanceof EnvironmentError) return err;
  const code = (err as { code?: unknown } | null)?.code;
  const found = typeof code === 'string' ? FAULTS.find(([prefix]) => code === prefix || code.startsWith(`${prefix}_`)) : undefined;
  if (!found) return /^postgres(?:ql)?:\/\//i.test(file) ? pgEnvironmentFault(err, file) : null;
  const { rule, what } = found[1];
  return new EnvironmentError(rule, `registry ${file}: ${what} (${code}: ${(err as Error).message}); nothing was written`);
}

/** Rethrow SQLite's environment faults as EnvironmentErrors; other errors pass unchanged. */
export async function translateFaults<T>(file: string, run: () => T | Promise<T>): Promise<T> {
  try {
    return await run();
  } catch (err) {
    throw environmentFault(err, file) ?? err;
  }
}
