/** Shared fixtures for registry tests: a registry in a fresh temp directory (or a fresh PostgreSQL database) and a small n,k table. */
import Database from 'better-sqlite3';
import { drizzle } from 'drizzle-orm/better-sqlite3';
import { migrate } from 'drizzle-orm/better-sqlite3/migrator';
import { cpSync, mkdtempSync, readFileSync, rmSync, writeFileSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import pg from 'pg';
import { inject } from 'vitest';
import { MIGRATIONS_FOLDER } from '../../src/registry/open.ts';
import { canonicalJson, createMaterial, importVersion, openRegistry, type Registry, versionSha256 } from '../../src/service/registry.ts';
import type { NkTable } from '../../src/table.ts';
import { createDatabase } from '../helpers/postgres.ts';

export interface TempRegistry {
  dir: string;
  /** The file's path, or the database's postgres:// URL. */
  path: string;
  registry: Registry;
  cleanup(): Promise<void>;
}

/**
 * The backends the registry suites run on: those the vitest config asks for (`provide: { registryBackends }`;
 * `npm test` asks for SQLite, `npm run test:postgres` for PostgreSQL, a config that says nothing for both), of
 * which PostgreSQL only when the run's throw-away server is up (test/postgres-global-setup.ts); SQLite when no
 * asked backend is there, so a file always has its suites. `describe.each(BACKENDS)` runs a suite on each.
 */
export type Backend = 'sqlite' | 'postgres';

declare module 'vitest' {
  export interface ProvidedContext {
    registryBackends: Backend[];
  }
}

// A vitest config without the PostgreSQL global setup provides no server.
const provided = inject('postgres') ?? {
  adminUrl: null,
  missing: 'this vitest config starts no PostgreSQL server (it lacks test/postgres-global-setup.ts)',
};
const asked: Backend[] = inject('registryBackends') ?? ['sqlite', 'postgres'];
const available = asked.filter((b) => b === 'sqlite' || provided.adminUrl);
export const BACKENDS: Backend[] = available.length ? available : ['sqlite'];
/** The run's PostgreSQL server when the config asks for PostgreSQL and it is up (else null), and why not. */
export const POSTGRES_SERVER = { adminUrl: BACKENDS.includes('postgres') ? provided.adminUrl : null, missing: provided.missing };
/** Said once per file where PostgreSQL is asked for but missing, so the run shows why it ran on SQLite only. */
export const POSTGRES_SKIPPED =
  asked.includes('postgres') && !provided.adminUrl ? `registry suites on PostgreSQL skipped: ${provided.missing}` : null;
if (POSTGRES_SKIPPED) console.warn(POSTGRES_SKIPPED);

let template: Promise<string> | undefined;

/**
 * A database migrated once per worker process, then closed: new databases are copied from it (CREATE DATABASE …
 * TEMPLATE, a file copy on the server), which is much faster than migrating each. Truncating a registry is refused
 * by its triggers, so a fresh database is the clean way to a fresh registry.
 */
function migratedTemplate(adminUrl: string): Promise<string> {
  template ??= (async () => {
    const url = await createDatabase(adminUrl, 'nkledger_template');
    const registry = await openRegistry(url);
    await registry.close();
    return new URL(url).pathname.slice(1);
  })();
  return template;
}

let copies = 0;

/** A fresh PostgreSQL database holding an empty, migrated registry; its URL. */
export async function freshPostgresUrl(): Promise<string> {
  const adminUrl = provided.adminUrl;
  if (!adminUrl) throw new Error(provided.missing ?? 'no PostgreSQL server');
  const from = await migratedTemplate(adminUrl);
  const name = `nkledger_reg_${process.pid}_${copies++}`;
  const client = new pg.Client({ connectionString: adminUrl });
  await client.connect();
  try {
    await client.query(`CREATE DATABASE "${name}" TEMPLATE "${from}"`);
  } finally {
    await client.end();
  }
  const url = new URL(adminUrl);
  url.pathname = `/${name}`;
  return url.toString();
}

async function dropDatabase(url: string): Promise<void> {
  const adminUrl = provided.adminUrl;
  if (!adminUrl) return;
  const client = new pg.Client({ connectionString: adminUrl });
  await client.connect();
  try {
    await client.query(`DROP DATABASE IF EXISTS "${new URL(url).pathname.slice(1)}" WITH (FORCE)`);
  } finally {
    await client.end();
  }
}

export async function tempRegistry(backend: Backend = 'sqlite'): Promise<TempRegistry> {
  const dir = mkdtempSync(join(tmpdir(), 'nkledger-reg-'));
  const path = backend === 'postgres' ? await freshPostgresUrl() : join(dir, 'test.db');
  const registry = await openRegistry(path);
  return {
    dir,
    path,
    registry,
    async cleanup() {
      await registry.close();
      // Not waited for: the next test does not need it gone, and the server is thrown away after the run anyway.
      if (backend === 'postgres') void dropDatabase(path).catch(() => {});
      rmSync(dir, { recursive: true, force: true });
    },
  };
}

/** A temp registry holding material "film" with one draft version (cauchyTable), created by "ada". */
export async function tempRegistryWithDraft(backend: Backend = 'sqlite'): Promise<TempRegistry> {
  const t = await tempRegistry(backend);
  await createMaterial(t.registry, { slug: 'film', name: 'Film' }, 'ada');
  await importVersion(t.registry, { slug: 'film', table: cauchyTable() }, 'ada');
  return t;
}

/**
 * A Cauchy-like table n = a + b/λ² (λ in µm), k = 0 on 400…800 nm every 50 nm: simple invented numbers,
 * not a measurement.
 */
export function cauchyTable(a = 1.45, b = 0.0036, kAt = 0): NkTable {
  const wavelengthNm = [400, 450, 500, 550, 600, 650, 700, 750, 800];
  return {
    wavelengthNm,
    n: wavelengthNm.map((w) => a + b / (w / 1000) ** 2),
    k: wavelengthNm.map(() => kAt),
  };
}

/** A version's provenance columns with nothing recorded, for rows written by raw SQL. */
export const NO_PROVENANCE = {
  sample: null,
  substrate: null,
  process: null,
  instrument: null,
  method: null,
  angles_deg: null,
  measured_on: null,
  operator: null,
  source_file: null,
  source_sha256: null,
  notes: null,
};

/**
 * A registry file `dir/old.db` at the schema of migration 0005 (before the audit chain), never opened by this
 * nkledger: material old-film with one approved version, and `events` (actor, action, version id) as audit rows
 * without hashes. Returns its path.
 */
export function registryFileBeforeTheChain(dir: string, events: readonly (readonly [string, string, number | null])[]): string {
  const db = databaseAtMigration(dir, 'old.db', 5);
  const content = { table: cauchyTable(1.5), fit: null, kk: null };
  const provenance = { ...NO_PROVENANCE };
  const at = '2025-03-01T10:00:00.000Z';
  db.prepare("INSERT INTO materials (slug, name, created_by, created_at, last_version) VALUES ('old-film', 'Old', 'ada', ?, 1)").run(at);
  db.prepare(
    "INSERT INTO material_versions (material_id, number, status, content, sha256, created_by, created_at, approved_by, approved_at, self_approved) VALUES (1, 1, 'approved', ?, ?, 'ada', ?, 'bob', ?, 0)",
  ).run(canonicalJson(content), versionSha256(content, provenance), at, at);
  for (const [actor, action, versionId] of events) {
    db.prepare('INSERT INTO audit_log (at, actor, action, material_id, version_id, detail) VALUES (?, ?, ?, 1, ?, ?)').run(
      at,
      actor,
      action,
      versionId,
      '{}',
    );
  }
  db.close();
  return join(dir, 'old.db');
}

/**
 * A new database file `dir/name` at the schema of an older nkledger: only the migrations up to index
 * `lastIdx` applied (from a copy of the migrations folder with a shortened journal). Returns the open
 * raw connection, for the test to fill as that older version would have; the caller closes it.
 */
export function databaseAtMigration(dir: string, name: string, lastIdx: number): Database.Database {
  const folder = join(dir, `drizzle-upto-${lastIdx}`);
  cpSync(MIGRATIONS_FOLDER, folder, { recursive: true });
  const journalPath = join(folder, 'meta', '_journal.json');
  const journal = JSON.parse(readFileSync(journalPath, 'utf8'));
  journal.entries = journal.entries.filter((e: { idx: number }) => e.idx <= lastIdx);
  writeFileSync(journalPath, JSON.stringify(journal));
  const sqlite = new Database(join(dir, name));
  migrate(drizzle(sqlite), { migrationsFolder: folder });
  return sqlite;
}

/**
 * Run raw SQL on the registry's own connection, bypassing the service (tests that plant rows or try to tamper):
 * `?` placeholders on both backends. Rows as plain objects.
 */
export async function rawSql<T = Record<string, unknown>>(registry: Registry, text: string, params: unknown[] = []): Promise<T[]> {
  if (registry.pg) {
    let n = 0;
    const { rows } = await registry.pg.pool.query(
      text.replace(/\?/g, () => `$${++n}`),
      params,
    );
    return rows as T[];
  }
  const statement = registry.sqlite.prepare(text);
  if (statement.reader) return statement.all(...params) as T[];
  statement.run(...params);
  return [];
}

/** Drop one of the registry's triggers, as someone with the database's own client could (PostgreSQL names its table). */
export async function dropTrigger(registry: Registry, name: string): Promise<void> {
  const table = /^(material_versions|materials|audit_log)_/.exec(name)?.[1];
  await rawSql(registry, registry.pg ? `DROP TRIGGER ${name} ON ${table}` : `DROP TRIGGER ${name}`);
}

/** Run `text` with foreign keys not enforced (SQLite's pragma; PostgreSQL's replica role, in one round trip on one connection). */
export async function withoutForeignKeys(registry: Registry, text: string): Promise<void> {
  if (registry.pg) {
    await registry.pg.pool.query(`SET session_replication_role = replica; ${text}; SET session_replication_role = origin`);
    return;
  }
  registry.sqlite.pragma('foreign_keys = OFF');
  registry.sqlite.exec(text);
}

/** Run `text` with one of the registry's triggers out of the way, then put it back as it was (a tamperer covering tracks). */
export async function withTriggerLifted(registry: Registry, name: string, text: string, params: unknown[] = []): Promise<void> {
  if (registry.pg) {
    const table = /^(material_versions|materials|audit_log)_/.exec(name)?.[1];
    await rawSql(registry, `ALTER TABLE ${table} DISABLE TRIGGER ${name}`);
    await rawSql(registry, text, params);
    await rawSql(registry, `ALTER TABLE ${table} ENABLE TRIGGER ${name}`);
    return;
  }
  const [{ sql }] = await rawSql<{ sql: string }>(registry, 'SELECT sql FROM sqlite_master WHERE name = ?', [name]);
  await rawSql(registry, `DROP TRIGGER ${name}`);
  await rawSql(registry, text, params);
  registry.sqlite.exec(sql);
}
