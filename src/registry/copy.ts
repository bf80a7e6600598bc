/**
 * Copying a whole registry into an empty one, of either backend (SQLite or PostgreSQL): the registry-layer half
 * of `nkledger registry copy` (the checks around it are src/service/registry-copy.ts).
 *
 * What is copied, row for row with the same ids: materials, material_versions (content text, SHA-256,
 * provenance, status and lifecycle records as stored), audit_log (every row, its hash chain prev_hash/hash
 * included), registry_settings and api_tokens (the SHA-256 of each secret only: secrets are never stored).
 * Not copied: web_sessions and web_pending_uploads. They live an hour or a day, belong to one browser signed in
 * to one server, and an upload waiting for its preview is not part of the record; after the copy everyone
 * signs in to the web pages again with their (copied) token.
 *
 * The destination's triggers (drizzle/0001, 0007; drizzle-pg/0001) stay in force and check what they can:
 * materials, versions, settings and tokens have no INSERT triggers, and the chained audit rows are inserted in
 * id order, so `audit_log_chain_append` accepts each one only because it extends the chain at its head, exactly
 * as when the source wrote it. Two steps are refused by those triggers as made, and get past them by one
 * documented mechanism, only inside the copy's one transaction:
 *
 *  1. The `chain.genesis` event that opening the empty destination wrote must go: the source's chain, with its
 *     own genesis, replaces it (two genesis events cannot share a log). `audit_log_no_delete` refuses that
 *     delete, so it is suspended for that one DELETE (of that one row, found by id and checked to be a genesis
 *     that covers nothing) and restored at once.
 *  2. Audit rows written before the chain existed (a registry upgraded from before drizzle/0007) have no hash,
 *     which `audit_log_chain_append` refuses; the source's genesis covers them by a digest. When the source has
 *     such rows, that trigger is suspended for their insert only, and restored before the chained rows go in.
 *
 * Suspending is dialect-specific: SQLite has no way to disable a trigger, so it is dropped and re-created from
 * the very text sqlite_master held (DDL is transactional in SQLite); PostgreSQL uses
 * `ALTER TABLE … DISABLE TRIGGER` / `ENABLE TRIGGER` (also transactional). A failure anywhere rolls the whole
 * transaction back, suspended triggers included; and before the commit the caller verifies the destination,
 * which compares every trigger with the migrations (by SQL on SQLite, by catalogue on PostgreSQL), so a copy
 * never commits with a trigger missing or disabled.
 *
 * PostgreSQL's identity columns do not move past explicit ids by themselves: the copy sets each sequence past
 * the highest id it wrote (`setval`). SQLite's AUTOINCREMENT does (sqlite_sequence follows explicit ids).
 */
import { getTableColumns, type SQL, sql } from 'drizzle-orm';
import type { SQLiteTable } from 'drizzle-orm/sqlite-core';
import { ConflictError } from '../errors.ts';
import { GENESIS_TYPE, type AuditRow } from './chain.ts';
import { environmentFault } from './faults.ts';
import type { Registry } from './open.ts';
import { isPostgresUrl, redactUrl } from './postgres.ts';
import { apiTokens, webPendingUploads, webSessions } from './schema-auth.ts';
import { auditLog, materials, materialVersions, registrySettings } from './schema.ts';
import { execute, queryRow, queryRows } from './sql.ts';

/** The tables a copy carries, in the order they are written (foreign keys point only to earlier ones). */
export const COPIED_TABLES = ['materials', 'material_versions', 'audit_log', 'registry_settings', 'api_tokens'] as const;
export type CopiedTable = (typeof COPIED_TABLES)[number];

/** The tables a copy leaves behind (short-lived browser state; see the file header). */
export const NOT_COPIED_TABLES = ['web_sessions', 'web_pending_uploads'] as const;
export type NotCopiedTable = (typeof NOT_COPIED_TABLES)[number];

const TABLES: Record<CopiedTable | NotCopiedTable, { table: SQLiteTable; key: string }> = {
  materials: { table: materials, key: 'id' },
  material_versions: { table: materialVersions, key: 'id' },
  audit_log: { table: auditLog, key: 'id' },
  registry_settings: { table: registrySettings, key: 'key' },
  api_tokens: { table: apiTokens, key: 'id' },
  web_sessions: { table: webSessions, key: 'id_sha256' },
  web_pending_uploads: { table: webPendingUploads, key: 'id' },
};

/** Tables whose integer ids come from a sequence (PostgreSQL identity, SQLite AUTOINCREMENT). */
const SEQUENCED: CopiedTable[] = ['materials', 'material_versions', 'audit_log'];

/** Columns stored as SQLite 0/1 and PostgreSQL boolean; read as JS booleans, written in the destination's form. */
const BOOLEAN_COLUMNS = new Set(['self_approved']);

/** Rows per INSERT statement (31 columns × 100 stays far below either backend's limit on parameters). */
const BATCH = 100;

export type Dialect = 'sqlite' | 'postgresql';

/**
 * An open registry of either backend (open.ts `openRegistry`). Raw SQL below goes through sql.ts, which
 * dispatches by dialect; inside the caller's transaction either way.
 */
export type CopyHandle = Registry;

const isPg = (handle: CopyHandle): boolean => handle.pg !== null;

/** The backend of an open registry. */
export function dialectOf(handle: CopyHandle): Dialect {
  return isPg(handle) ? 'postgresql' : 'sqlite';
}

/** The column names of a copied table, as both schemas name them (test/registry/pg-schema.test.ts keeps them equal). */
export function columnsOf(table: CopiedTable | NotCopiedTable): string[] {
  return Object.values(getTableColumns(TABLES[table].table)).map((c) => c.name);
}

const ident = (name: string) => sql.raw(`"${name}"`);

type Row = Record<string, unknown>;

/** Every row a copy carries, by table, with backend-neutral values (booleans as booleans). */
export interface RegistrySnapshot {
  rows: Record<CopiedTable, Row[]>;
  /** How many rows of each table the copy leaves behind. */
  notCopied: Record<NotCopiedTable, number>;
}

async function countRows(registry: CopyHandle, table: string): Promise<number> {
  const row = await queryRow<{ n: number | string }>(registry, sql`SELECT count(*) AS n FROM ${ident(table)}`);
  return Number(row?.n ?? 0);
}

/** Row counts of every table a copy concerns. */
export async function tableCounts(registry: CopyHandle): Promise<Record<CopiedTable | NotCopiedTable, number>> {
  const out = {} as Record<CopiedTable | NotCopiedTable, number>;
  for (const table of [...COPIED_TABLES, ...NOT_COPIED_TABLES]) out[table] = await countRows(registry, table);
  return out;
}

/** A table's key for ORDER BY: text keys in byte order on both backends (PostgreSQL sorts text by locale otherwise). */
function orderKey(handle: CopyHandle, table: CopiedTable): SQL {
  const key = ident(TABLES[table].key);
  return isPg(handle) && !SEQUENCED.includes(table) ? sql`${key} COLLATE "C"` : key;
}

/**
 * Read every copied row, oldest first by key (text keys in byte order). Call inside a read transaction of `registry` so the tables are one
 * consistent snapshot.
 */
export async function readSnapshot(registry: CopyHandle): Promise<RegistrySnapshot> {
  const rows = {} as Record<CopiedTable, Row[]>;
  for (const table of COPIED_TABLES) {
    const columns = columnsOf(table);
    const read = await queryRows<Row>(
      registry,
      sql`SELECT ${sql.join(columns.map(ident), sql`, `)} FROM ${ident(table)} ORDER BY ${orderKey(registry, table)}`,
    );
    rows[table] = read.map((row) => {
      for (const column of BOOLEAN_COLUMNS) if (column in row && row[column] !== null) row[column] = Boolean(row[column]);
      return row;
    });
  }
  const notCopied = {} as Record<NotCopiedTable, number>;
  for (const table of NOT_COPIED_TABLES) notCopied[table] = await countRows(registry, table);
  return { rows, notCopied };
}

/** A value as the destination's driver binds it. */
function bindable(column: string, value: unknown, dialect: Dialect): unknown {
  if (value === null || value === undefined) return null;
  if (BOOLEAN_COLUMNS.has(column) && dialect === 'sqlite') return value ? 1 : 0;
  return value;
}

async function insertRows(registry: CopyHandle, table: CopiedTable, rows: Row[], dialect: Dialect): Promise<void> {
  const columns = columnsOf(table);
  const head = sql`INSERT INTO ${ident(table)} (${sql.join(columns.map(ident), sql`, `)}) VALUES `;
  for (let start = 0; start < rows.length; start += BATCH) {
    const values: SQL[] = rows.slice(start, start + BATCH).map(
      (row) =>
        sql`(${sql.join(
          columns.map((c) => sql`${bindable(c, row[c], dialect)}`),
          sql`, `,
        )})`,
    );
    try {
      await execute(registry, sql.join([head, sql.join(values, sql`, `)], sql``));
    } catch (err) {
      throw refusal(err, registry, `writing ${table} rows ${start + 1}–${start + values.length}`);
    }
  }
}

/**
 * The driver's own error behind drizzle's "Failed to run the query …" wrapper (which quotes the whole statement,
 * content included): an environment fault as such (exit 4), anything else said with what was being written.
 */
function refusal(err: unknown, registry: CopyHandle, doing: string): Error {
  const cause = err instanceof Error && err.cause instanceof Error ? err.cause : err;
  const fault = environmentFault(cause, registry.path);
  if (fault) return fault;
  return new Error(`${doing} into the destination failed: ${cause instanceof Error ? cause.message : String(cause)}`, { cause });
}

/**
 * Suspend one trigger of `table` for `body` (see the file header), inside the caller's transaction, and put it
 * back exactly as it was.
 */
async function withTriggerSuspended(
  registry: CopyHandle,
  dialect: Dialect,
  table: string,
  trigger: string,
  body: () => Promise<void>,
): Promise<void> {
  if (dialect === 'postgresql') {
    await execute(registry, sql`ALTER TABLE ${ident(table)} DISABLE TRIGGER ${ident(trigger)}`);
    await body();
    await execute(registry, sql`ALTER TABLE ${ident(table)} ENABLE TRIGGER ${ident(trigger)}`);
    return;
  }
  const stored = await queryRow<{ sql: string }>(registry, sql`SELECT sql FROM sqlite_master WHERE type = 'trigger' AND name = ${trigger}`);
  if (!stored) throw new Error(`the destination has no trigger ${trigger} (verify it)`);
  await execute(registry, sql`DROP TRIGGER ${ident(trigger)}`);
  await body();
  await execute(registry, sql.raw(stored.sql));
}

/** Why a destination is not empty, or null when it holds only what opening a new registry writes. */
export async function notEmptyBecause(registry: CopyHandle): Promise<string | null> {
  const counts = await tableCounts(registry);
  const holding = [...COPIED_TABLES, ...NOT_COPIED_TABLES].filter((t) => t !== 'audit_log' && counts[t] > 0).map((t) => `${counts[t]} ${t} rows`);
  if (holding.length > 0) return `it holds ${holding.join(', ')}`;
  const audit = await queryRows<AuditRow>(registry, sql`SELECT * FROM audit_log ORDER BY id`);
  if (audit.length > 1) return `its audit log holds ${audit.length} events`;
  if (audit.length === 1 && !isEmptyGenesis(audit[0])) return `its audit log holds a ${audit[0].action} event`;
  return null;
}

/** The genesis event a new, empty registry starts its chain with: no versions, no earlier rows. */
function isEmptyGenesis(row: AuditRow): boolean {
  if (row.action !== GENESIS_TYPE || row.prev_hash !== null) return false;
  try {
    const detail = JSON.parse(row.detail) as { versions?: unknown; earlier_events?: unknown };
    return Array.isArray(detail.versions) && detail.versions.length === 0 && detail.earlier_events === 0;
  } catch {
    return false;
  }
}

/** What `writeSnapshot` did. */
export interface WriteReport {
  /** The destination's own genesis event, removed for the source's chain (false when it had none). */
  replacedGenesis: boolean;
  /** Audit rows from before the chain existed (inserted with the chain trigger suspended). */
  preChainRows: number;
}

/**
 * Write `snapshot` into the empty `registry`. Call inside one write transaction of `registry` (the caller's
 * records.ts `writeTransaction`): it is all or nothing. Refuses (ConflictError copy-destination-not-empty) a
 * destination that holds anything but the genesis event of a new registry.
 */
export async function writeSnapshot(registry: CopyHandle, snapshot: RegistrySnapshot): Promise<WriteReport> {
  const dialect = dialectOf(registry);
  const reason = await notEmptyBecause(registry);
  if (reason !== null) {
    throw new ConflictError(
      `the destination registry is not empty (${reason}); a copy goes only into a new, empty registry (nothing was written)`,
      'copy-destination-not-empty',
    );
  }
  const existing = await queryRows<{ id: number }>(registry, sql`SELECT id FROM audit_log`);
  if (existing.length === 1) {
    const id = existing[0].id;
    await withTriggerSuspended(registry, dialect, 'audit_log', 'audit_log_no_delete', () =>
      execute(registry, sql`DELETE FROM audit_log WHERE id = ${id}`),
    );
  }
  await insertRows(registry, 'materials', snapshot.rows.materials, dialect);
  await insertRows(registry, 'material_versions', snapshot.rows.material_versions, dialect);
  const audit = snapshot.rows.audit_log;
  const start = audit.findIndex((r) => r.hash !== null || r.prev_hash !== null);
  const preChain = start < 0 ? audit.length : start;
  if (preChain > 0) {
    await withTriggerSuspended(registry, dialect, 'audit_log', 'audit_log_chain_append', () =>
      insertRows(registry, 'audit_log', audit.slice(0, preChain), dialect),
    );
  }
  await insertRows(registry, 'audit_log', audit.slice(preChain), dialect);
  await insertRows(registry, 'registry_settings', snapshot.rows.registry_settings, dialect);
  await insertRows(registry, 'api_tokens', snapshot.rows.api_tokens, dialect);
  if (dialect === 'postgresql') {
    for (const table of SEQUENCED) {
      // The next id is one past the highest copied (1 on an empty table: is_called false hands out the value itself).
      await execute(registry, sql`SELECT setval(pg_get_serial_sequence(${table}, 'id'), COALESCE(MAX(id), 0) + 1, false) FROM ${ident(table)}`);
    }
  }
  return { replacedGenesis: existing.length === 1, preChainRows: preChain };
}

/** A database location fit to print: a URL's password masked (postgres.ts `redactUrl`), a file path as given. */
export function redactLocation(location: string): string {
  return isPostgresLocation(location) ? redactUrl(location) : location;
}

/** True when `location` names a PostgreSQL database (a postgres:// or postgresql:// URL) rather than a file. */
export function isPostgresLocation(location: string): boolean {
  return isPostgresUrl(location) || /^postgres(ql)?:/i.test(location);
}
