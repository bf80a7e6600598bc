/**
 * PostgreSQL's reports of a failing environment turned into EnvironmentErrors (CLI exit 4; the API answers 503, 507 for `registry-disk-full`, by src/http-status.ts), the
 * twin of faults.ts for SQLite: a server that cannot be reached, refuses the user or the password, has no such
 * database, is shutting down, out of disk or connections, read-only (a standby, default_transaction_read_only),
 * or held the write lock past the wait. The message names the registry by its URL with the password masked
 * (postgres.ts `redactUrl`; callers pass the masked form) and says whether anything was written: a write is one
 * transaction, rolled back whole when it fails — except when the connection is lost during COMMIT, when the
 * outcome is unknown and the message says so (`pgCommitFault`).
 *
 * What stays as it is (not an environment fault): a refusal by one of the registry's triggers (SQLSTATE 23000,
 * integrity_constraint_violation, with the same message text as the SQLite twin) and a unique violation (23505).
 * On SQLite those are SQLITE_CONSTRAINT_TRIGGER and SQLITE_CONSTRAINT_UNIQUE, which `environmentFault` also
 * leaves alone: the service checks every rule first (a taken slug is a ConflictError `material-exists` from
 * service/materials.ts, read under the write lock), so reaching the database's own defence means a writer
 * skipped a check or the lock — an internal fault (exit 1, HTTP 500) on both backends, with the same message.
 * `isPgTriggerRefusal` and `isPgUniqueViolation` tell them apart for code that wants to.
 */
import { DrizzleQueryError } from 'drizzle-orm';
import { EnvironmentError } from '../errors.ts';

interface Fault {
  rule: string;
  what: string;
}

const UNREACHABLE: Fault = { rule: 'registry-unreachable', what: 'the PostgreSQL server cannot be reached' };
const AUTH: Fault = { rule: 'registry-auth-failed', what: 'the PostgreSQL server refused the user or the password' };

/** SQLSTATEs (postgresql.org/docs/current/errcodes-appendix.html): exact codes first, then classes by prefix. */
const BY_CODE: Record<string, Fault> = {
  '28P01': AUTH,
  '28000': AUTH,
  '3D000': { rule: 'registry-database-missing', what: 'the server has no such database (create it first)' },
  '53100': { rule: 'registry-disk-full', what: "the server's disk is full" },
  '53200': { rule: 'registry-server-overloaded', what: 'the server is out of memory' },
  '53300': { rule: 'registry-server-overloaded', what: 'the server has no free connection slot' },
  '53400': { rule: 'registry-server-overloaded', what: 'the server hit one of its configured limits' },
  '25006': { rule: 'registry-read-only', what: 'the database is read-only (a standby, or default_transaction_read_only)' },
  '55P03': { rule: 'registry-busy', what: 'another writer held the registry locked for too long' },
  '57014': { rule: 'registry-busy', what: 'a statement ran past the server’s statement_timeout' },
  '57P01': { rule: 'registry-server-shutdown', what: 'the server ended the connection (an administrator, or a shutdown)' },
  '57P02': { rule: 'registry-server-shutdown', what: 'the server is restarting after a crash' },
  '57P03': { rule: 'registry-server-shutdown', what: 'the server is starting up or shutting down and takes no connections' },
  '42501': { rule: 'registry-permission-denied', what: 'the database user lacks a privilege the registry needs' },
  XX001: { rule: 'registry-corrupt', what: 'the server reports corrupt data (restore from a backup)' },
  XX002: { rule: 'registry-corrupt', what: 'the server reports a corrupt index (REINDEX it)' },
};

const BY_CLASS: [prefix: string, fault: Fault][] = [
  ['08', { rule: 'registry-unreachable', what: 'the connection to the PostgreSQL server failed' }],
  ['53', { rule: 'registry-server-overloaded', what: 'the server is out of resources' }],
  ['58', { rule: 'registry-io-error', what: 'the server failed to read or write its files' }],
];

/** Node's socket and name-lookup errors while connecting. */
const SOCKET_CODES = new Set(['ECONNREFUSED', 'ENOTFOUND', 'EAI_AGAIN', 'EHOSTUNREACH', 'ENETUNREACH', 'ETIMEDOUT', 'ECONNRESET', 'EPIPE', 'ENOENT']);

/** node-postgres's own wording of a lost or timed-out connection (pg/lib/client.js, pg-pool). */
const LOST = /^(Connection terminated|timeout exceeded when trying to connect|Client has encountered a connection error)/;
const TIMEOUT = /timeout/i;
/** node-postgres when the server asks for a password and the URL has none. */
const NO_PASSWORD = /client password must be a string/;

/**
 * The driver's error inside drizzle's wrapper: drizzle throws a DrizzleQueryError ("Failed query: <sql> params:
 * <values>") whose `cause` is node-postgres's error with the SQLSTATE and the server's message.
 */
export function driverError(err: unknown): unknown {
  return err instanceof DrizzleQueryError && err.cause !== undefined ? err.cause : err;
}

function codeOf(wrapped: unknown): string | undefined {
  const err = driverError(wrapped);
  const e = err as { code?: unknown; errors?: unknown[] } | null;
  if (typeof e?.code === 'string') return e.code;
  // Connecting to a name with several addresses (localhost: ::1 and 127.0.0.1) fails with an AggregateError.
  if (Array.isArray(e?.errors))
    for (const inner of e.errors) if (typeof (inner as { code?: unknown })?.code === 'string') return (inner as { code: string }).code;
  return undefined;
}

/** The SQLSTATE of a PostgreSQL error (five characters), or undefined for anything else. */
export function sqlStateOf(err: unknown): string | undefined {
  const code = codeOf(err);
  return code !== undefined && /^[0-9A-Z]{5}$/.test(code) && !code.startsWith('E') ? code : undefined;
}

function faultOf(wrapped: unknown): Fault | null {
  const err = driverError(wrapped);
  const code = codeOf(err);
  if (code !== undefined) {
    if (SOCKET_CODES.has(code)) return UNREACHABLE;
    const exact = BY_CODE[code];
    if (exact) return exact;
    const byClass = BY_CLASS.find(([prefix]) => code.length === 5 && code.startsWith(prefix));
    if (byClass) return byClass[1];
  }
  const message = (err as Error | null)?.message ?? '';
  if (code === undefined && err instanceof Error) {
    if (LOST.test(message)) return TIMEOUT.test(message) ? { ...UNREACHABLE, what: 'the PostgreSQL server did not answer in time' } : UNREACHABLE;
    if (NO_PASSWORD.test(message)) return { ...AUTH, what: 'the PostgreSQL server asks for a password and the URL gives none' };
  }
  return null;
}

function describe(wrapped: unknown): string {
  const err = driverError(wrapped);
  const code = codeOf(err);
  const message = (err as Error | null)?.message || String(err);
  return code && !message.includes(code) ? `${code}: ${message}` : message;
}

/** The EnvironmentError for a fault of the environment reported by PostgreSQL or the connection, or null. */
export function pgEnvironmentFault(err: unknown, url: string): EnvironmentError | null {
  if (err instanceof EnvironmentError) return err;
  const fault = faultOf(err);
  if (!fault) return null;
  return new EnvironmentError(fault.rule, `registry ${url}: ${fault.what} (${describe(err)}); nothing was written`);
}

/**
 * A failure to connect (opening the registry, checking a client out of the pool): always an EnvironmentError,
 * `registry-unreachable` when the error says nothing more precise.
 */
export function pgConnectFault(err: unknown, url: string): EnvironmentError {
  return (
    pgEnvironmentFault(err, url) ??
    new EnvironmentError(UNREACHABLE.rule, `registry ${url}: ${UNREACHABLE.what} (${describe(err)}); nothing was written`)
  );
}

/**
 * The connection was lost while COMMIT was on its way: the server may have committed or not. Says so instead of
 * "nothing was written", so nobody repeats a write blindly.
 */
export function pgCommitFault(err: unknown, url: string): EnvironmentError {
  const fault = faultOf(err) ?? UNREACHABLE;
  return new EnvironmentError(
    fault.rule,
    `registry ${url}: the connection was lost while committing (${describe(err)}); the write may or may not have been committed — look at the registry before repeating it`,
  );
}

/**
 * What to throw for `err`: its EnvironmentError when it is a fault of the environment; for any other error the
 * server reported (a trigger's refusal, a unique violation), node-postgres's own error, whose message is the
 * server's — for a trigger, the same text as SQLite's — rather than drizzle's "Failed query: …" wrapper, which
 * would also show the statement's values; anything else unchanged.
 */
export function pgFault(err: unknown, url: string): unknown {
  const fault = pgEnvironmentFault(err, url);
  if (fault) return fault;
  const inner = driverError(err);
  return sqlStateOf(inner) !== undefined ? inner : err;
}

/** Run `work`, rethrowing PostgreSQL's environment faults as EnvironmentErrors; other errors pass unchanged. */
export async function translatePgFaults<T>(url: string, work: () => Promise<T>): Promise<T> {
  try {
    return await work();
  } catch (err) {
    throw pgFault(err, url);
  }
}

/** A refusal raised by one of the registry's triggers (nkledger_refuse, the audit chain check): SQLSTATE 23000. */
export function isPgTriggerRefusal(err: unknown): boolean {
  return sqlStateOf(err) === '23000' && /^nkledger: /.test((driverError(err) as Error).message);
}

/** A unique index or constraint refused a duplicate (SQLSTATE 23505); `constraint` names it. */
export function isPgUniqueViolation(err: unknown): err is Error & { constraint?: string } {
  return sqlStateOf(err) === '23505';
}
