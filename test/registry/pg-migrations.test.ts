/**
 * The PostgreSQL migrations (drizzle-pg/) on a real server (test/postgres-global-setup.ts): they apply on an
 * empty database through drizzle's node-postgres migrator, twice is a no-op, the tables they make are the ones
 * schema-pg.ts describes, and every trigger refuses what its SQLite twin (drizzle/) refuses — same cases, same
 * message text — and allows what it allows. The same statements run on a SQLite registry migrated from
 * drizzle/ and on PostgreSQL, so the two are compared against each other as well as against the expected text.
 * Skipped with a plain message where PostgreSQL 15+ is not installed.
 */
import Database from 'better-sqlite3';
import { getTableColumns, is } from 'drizzle-orm';
import { drizzle as drizzleSqlite } from 'drizzle-orm/better-sqlite3';
import { migrate as migrateSqlite } from 'drizzle-orm/better-sqlite3/migrator';
import { drizzle as drizzlePg } from 'drizzle-orm/node-postgres';
import { migrate as migratePg } from 'drizzle-orm/node-postgres/migrator';
import { getTableConfig, PgTable } from 'drizzle-orm/pg-core';
import { readFileSync } from 'node:fs';
import { fileURLToPath } from 'node:url';
import pg from 'pg';
import { afterAll, beforeAll, describe, expect, inject, it } from 'vitest';
import * as pgSchema from '../../src/registry/schema-pg.ts';
import { createDatabase } from '../helpers/postgres.ts';

const PG_FOLDER = fileURLToPath(new URL('../../drizzle-pg', import.meta.url));
const SQLITE_FOLDER = fileURLToPath(new URL('../../drizzle', import.meta.url));
const journal = JSON.parse(readFileSync(`${PG_FOLDER}/meta/_journal.json`, 'utf8')) as { entries: { tag: string }[] };

/** Triggers only PostgreSQL needs: TRUNCATE skips row-level DELETE triggers and SQLite has no TRUNCATE. */
const PG_ONLY_TRIGGERS = ['audit_log_no_truncate', 'material_versions_no_truncate', 'materials_no_truncate'];

/**
 * The change-notice triggers (drizzle-pg/0002_change_notify.sql) exist only on PostgreSQL: they tell other servers
 * on the same database about a commit (LISTEN/NOTIFY); one SQLite file has no other servers, and SQLite readers
 * see other processes' commits through PRAGMA data_version. They share this prefix, and the parity check leaves
 * them out; that they are all there is checked below and by the tamper check (integrity-pg.ts PG_DEFENCES).
 */
const NOTIFY_PREFIX = 'nkledger_notify_';
const NOTIFY_TRIGGERS = ['api_tokens', 'material_versions', 'materials', 'registry_settings'].map((t) => `${NOTIFY_PREFIX}${t}`);

const MSG = {
  content: 'nkledger: version content, provenance and identity are immutable (a correction is a new version)',
  status: 'nkledger: status may only go draft -> approved -> retired, or draft -> withdrawn',
  once: 'nkledger: approval, retirement and withdrawal records are written once',
  versionDelete: 'nkledger: versions are never deleted (retire or withdraw instead)',
  materialDelete: 'nkledger: materials are never deleted',
  material: "nkledger: a material's slug and creation record never change, and version numbers are never reused",
  audit: 'nkledger: the audit log is append-only',
  chain: 'nkledger: an audit event must carry its hash and extend the chain at its head',
};

/** Rows both dialects start every case from: one material, a draft version, an approved one, a chain of two events. */
const FIXTURE = [
  `INSERT INTO materials (slug, name, created_by, created_at, last_version) VALUES ('sin-pecvd-a', 'PECVD silicon nitride', 'ada', '2026-01-05T09:00:00.000Z', 2)`,
  `INSERT INTO material_versions (material_id, number, content, sha256, created_by, created_at, preamble)
     VALUES (1, 1, '{"table":{}}', 'aa', 'ada', '2026-01-05T09:01:00.000Z', '["# Marrowick Optics"]')`,
  `INSERT INTO material_versions (material_id, number, status, content, sha256, created_by, created_at, approved_by, approved_at, self_approved)
     VALUES (1, 2, 'approved', '{"table":{"n":[]}}', 'bb', 'ada', '2026-01-05T09:02:00.000Z', 'ben', '2026-01-05T10:00:00.000Z', FALSE)`,
  `INSERT INTO audit_log (at, actor, action, hash) VALUES ('2026-01-05T09:00:00.000Z', 'nkledger', 'chain.genesis', 'h1')`,
  `INSERT INTO audit_log (at, actor, action, material_id, prev_hash, hash) VALUES ('2026-01-05T09:01:00.000Z', 'ada', 'version.import', 1, 'h1', 'h2')`,
];

interface Case {
  what: string;
  /** Statements in order; all but the last must succeed. */
  steps: string[];
  /** The refusal text of the last statement, or null when it is allowed. */
  refused: string | null;
}

const CASES: Case[] = [
  { what: 'UPDATE of a version content', steps: [`UPDATE material_versions SET content = '{}' WHERE id = 1`], refused: MSG.content },
  { what: 'UPDATE of a version sha256', steps: [`UPDATE material_versions SET sha256 = 'cc' WHERE id = 2`], refused: MSG.content },
  { what: 'UPDATE of a version number', steps: [`UPDATE material_versions SET number = 3 WHERE id = 2`], refused: MSG.content },
  { what: 'UPDATE of a provenance field', steps: [`UPDATE material_versions SET operator = 'eve' WHERE id = 1`], refused: MSG.content },
  { what: 'UPDATE of the preamble (added by 0005)', steps: [`UPDATE material_versions SET preamble = NULL WHERE id = 1`], refused: MSG.content },
  {
    what: 'UPDATE of absent_columns (added by 0005)',
    steps: [`UPDATE material_versions SET absent_columns = '["k"]' WHERE id = 1`],
    refused: MSG.content,
  },
  {
    what: 'approval of a draft',
    steps: [
      `UPDATE material_versions SET status = 'approved', approved_by = 'ben', approved_at = '2026-01-06T08:00:00.000Z', self_approved = FALSE WHERE id = 1`,
    ],
    refused: null,
  },
  { what: 'draft -> retired', steps: [`UPDATE material_versions SET status = 'retired' WHERE id = 1`], refused: MSG.status },
  { what: 'approved -> draft', steps: [`UPDATE material_versions SET status = 'draft' WHERE id = 2`], refused: MSG.status },
  {
    what: 'retirement of an approved version',
    steps: [
      `UPDATE material_versions SET status = 'retired', retired_by = 'ben', retired_at = '2026-02-01T08:00:00.000Z', retire_reason = 'superseded' WHERE id = 2`,
    ],
    refused: null,
  },
  {
    what: 'withdrawal of a draft, then approval of it',
    steps: [
      `UPDATE material_versions SET status = 'withdrawn', withdrawn_by = 'ada', withdrawn_at = '2026-01-07T08:00:00.000Z', withdraw_reason = 'wrong sample' WHERE id = 1`,
      `UPDATE material_versions SET status = 'approved' WHERE id = 1`,
    ],
    refused: MSG.status,
  },
  { what: 'rewriting who approved', steps: [`UPDATE material_versions SET approved_by = 'eve' WHERE id = 2`], refused: MSG.once },
  { what: 'rewriting self_approved', steps: [`UPDATE material_versions SET self_approved = TRUE WHERE id = 2`], refused: MSG.once },
  {
    what: 'rewriting a retirement reason',
    steps: [
      `UPDATE material_versions SET status = 'retired', retired_by = 'ben', retired_at = '2026-02-01T08:00:00.000Z', retire_reason = 'superseded' WHERE id = 2`,
      `UPDATE material_versions SET retire_reason = 'other' WHERE id = 2`,
    ],
    refused: MSG.once,
  },
  { what: 'DELETE of a version', steps: ['DELETE FROM material_versions WHERE id = 1'], refused: MSG.versionDelete },
  { what: 'DELETE of a material', steps: ['DELETE FROM materials WHERE id = 1'], refused: MSG.materialDelete },
  { what: 'UPDATE of a material slug', steps: [`UPDATE materials SET slug = 'sin-other' WHERE id = 1`], refused: MSG.material },
  { what: 'UPDATE of a material creator', steps: [`UPDATE materials SET created_by = 'eve' WHERE id = 1`], refused: MSG.material },
  { what: 'last_version going down', steps: ['UPDATE materials SET last_version = 1 WHERE id = 1'], refused: MSG.material },
  { what: 'last_version going up', steps: ['UPDATE materials SET last_version = 3 WHERE id = 1'], refused: null },
  { what: 'renaming a material', steps: [`UPDATE materials SET name = 'Silicon nitride', tags = '["pecvd"]' WHERE id = 1`], refused: null },
  { what: 'UPDATE of an audit event', steps: [`UPDATE audit_log SET actor = 'eve' WHERE id = 2`], refused: MSG.audit },
  { what: 'DELETE of an audit event', steps: ['DELETE FROM audit_log WHERE id = 2'], refused: MSG.audit },
  {
    what: 'an audit event without its hash',
    steps: [`INSERT INTO audit_log (at, actor, action, prev_hash) VALUES ('2026-01-08T08:00:00.000Z', 'ada', 'version.approve', 'h2')`],
    refused: MSG.chain,
  },
  {
    what: 'an audit event branching off an older one',
    steps: [`INSERT INTO audit_log (at, actor, action, prev_hash, hash) VALUES ('2026-01-08T08:00:00.000Z', 'ada', 'version.approve', 'h1', 'h3')`],
    refused: MSG.chain,
  },
  {
    what: 'a second genesis',
    steps: [`INSERT INTO audit_log (at, actor, action, hash) VALUES ('2026-01-08T08:00:00.000Z', 'nkledger', 'chain.genesis', 'h3')`],
    refused: MSG.chain,
  },
  {
    what: 'an audit event extending the head',
    steps: [`INSERT INTO audit_log (at, actor, action, prev_hash, hash) VALUES ('2026-01-08T08:00:00.000Z', 'ada', 'version.approve', 'h2', 'h3')`],
    refused: null,
  },
  {
    what: 'settings rows change freely',
    steps: [
      `INSERT INTO registry_settings (key, value, updated_by, updated_at) VALUES ('allow_self_approval', 'true', 'ada', '2026-01-05T09:00:00.000Z')`,
      `UPDATE registry_settings SET value = 'false' WHERE key = 'allow_self_approval'`,
    ],
    refused: null,
  },
];

/** The refusal text of a statement run by `run`, or null when it succeeded. */
async function outcome(run: () => unknown): Promise<string | null> {
  try {
    await run();
    return null;
  } catch (err) {
    return (err as Error).message;
  }
}

function sqliteRegistry(): Database.Database {
  const sqlite = new Database(':memory:');
  sqlite.pragma('foreign_keys = ON');
  migrateSqlite(drizzleSqlite(sqlite), { migrationsFolder: SQLITE_FOLDER });
  return sqlite;
}

const server = inject('postgres');
if (!server.adminUrl) console.warn(server.missing);

describe.skipIf(!server.adminUrl)(`the PostgreSQL migrations on a real server${server.adminUrl ? '' : ` (${server.missing})`}`, () => {
  let pool: pg.Pool;
  let sqlite: Database.Database;

  beforeAll(async () => {
    pool = new pg.Pool({ connectionString: await createDatabase(server.adminUrl as string), max: 12 });
    await migratePg(drizzlePg(pool), { migrationsFolder: PG_FOLDER });
    sqlite = sqliteRegistry();
  });
  afterAll(async () => {
    await pool?.end();
    sqlite?.close();
  });

  it('apply on an empty database; a second run is a no-op', async () => {
    const applied = async () => (await pool.query('SELECT hash FROM drizzle.__drizzle_migrations ORDER BY id')).rows.map((r) => r.hash as string);
    const before = await applied();
    expect(before).toHaveLength(journal.entries.length);
    await migratePg(drizzlePg(pool), { migrationsFolder: PG_FOLDER });
    expect(await applied()).toEqual(before);
  });

  it('make the tables schema-pg.ts describes: columns, types and nullability', async () => {
    const { rows } = await pool.query<{ table_name: string; column_name: string; data_type: string; is_nullable: string }>(
      `SELECT table_name, column_name, data_type, is_nullable FROM information_schema.columns WHERE table_schema = 'public' ORDER BY table_name, ordinal_position`,
    );
    const inDatabase = rows.map((r) => `${r.table_name}.${r.column_name} ${r.data_type}${r.is_nullable === 'NO' ? ' not null' : ''}`);
    const inSchema = (Object.values(pgSchema) as unknown[])
      .filter((t): t is PgTable => is(t, PgTable))
      .flatMap((table) => {
        const name = getTableConfig(table).name;
        return Object.values(getTableColumns(table)).map((c) => `${name}.${c.name} ${c.getSQLType()}${c.notNull ? ' not null' : ''}`);
      });
    expect(inDatabase.sort()).toEqual(inSchema.sort());
  });

  it('each SQLite trigger has a PostgreSQL twin of the same name, enabled', async () => {
    const inSqlite = (sqlite.prepare("SELECT name FROM sqlite_master WHERE type = 'trigger' ORDER BY name").all() as { name: string }[]).map(
      (r) => r.name,
    );
    const { rows } = await pool.query<{ tgname: string; tgenabled: string }>(
      'SELECT tgname, tgenabled FROM pg_trigger WHERE NOT tgisinternal ORDER BY tgname',
    );
    expect(inSqlite.length).toBeGreaterThanOrEqual(9);
    expect(rows.map((r) => r.tgname).filter((n) => !PG_ONLY_TRIGGERS.includes(n) && !n.startsWith(NOTIFY_PREFIX))).toEqual(inSqlite);
    for (const name of [...PG_ONLY_TRIGGERS, ...NOTIFY_TRIGGERS]) expect(rows.map((r) => r.tgname)).toContain(name);
    // 'O': fires in the normal (origin) replication role; 'D' would be ALTER TABLE … DISABLE TRIGGER.
    expect(new Set(rows.map((r) => r.tgenabled))).toEqual(new Set(['O']));
  });

  describe.each(CASES)('$what', ({ steps, refused }) => {
    it(refused ? `is refused on both: "${refused}"` : 'is allowed on both', async () => {
      // SQLite: each case in a transaction rolled back, on the fixture rows.
      sqlite.exec('BEGIN');
      let onSqlite: string | null;
      try {
        for (const statement of FIXTURE) sqlite.exec(statement);
        for (const statement of steps.slice(0, -1)) sqlite.exec(statement);
        onSqlite = await outcome(() => sqlite.exec(steps[steps.length - 1]));
      } finally {
        sqlite.exec('ROLLBACK');
      }
      // PostgreSQL: the same statements, also rolled back; ids restart at 1 so the fixture's ids hold.
      const client = await pool.connect();
      let onPg: string | null;
      let code: string | undefined;
      try {
        await client.query('BEGIN');
        await client.query('ALTER TABLE materials ALTER COLUMN id RESTART');
        await client.query('ALTER TABLE material_versions ALTER COLUMN id RESTART');
        await client.query('ALTER TABLE audit_log ALTER COLUMN id RESTART');
        for (const statement of FIXTURE) await client.query(statement);
        for (const statement of steps.slice(0, -1)) await client.query(statement);
        onPg = await outcome(async () => {
          try {
            await client.query(steps[steps.length - 1]);
          } catch (err) {
            code = (err as { code?: string }).code;
            throw err;
          }
        });
      } finally {
        await client.query('ROLLBACK');
        client.release();
      }
      expect(onSqlite).toBe(refused);
      expect(onPg).toBe(refused);
      // SQLite reports a trigger's refusal as SQLITE_CONSTRAINT_TRIGGER; PostgreSQL's twin as SQLSTATE 23000.
      if (refused) expect(code).toBe('23000');
    });
  });

  it.each([
    ['materials', MSG.materialDelete],
    ['material_versions', MSG.versionDelete],
    ['audit_log', MSG.audit],
  ])('TRUNCATE of %s is refused like a DELETE (PostgreSQL only)', async (table, message) => {
    const client = await pool.connect();
    try {
      await client.query('BEGIN');
      expect(await outcome(() => client.query(`TRUNCATE ${table} CASCADE`))).toBe(message);
    } finally {
      await client.query('ROLLBACK');
      client.release();
    }
  });

  it('writers on separate pools (as on separate servers) under nkledger_write_lock() number versions 1..N without gaps or repeats', async () => {
    const db = await createDatabase(server.adminUrl as string, 'nkledger_lock');
    const pools = [0, 1, 2].map(() => new pg.Pool({ connectionString: db, max: 4 }));
    try {
      await migratePg(drizzlePg(pools[0]), { migrationsFolder: PG_FOLDER });
      await pools[0].query(
        `INSERT INTO materials (slug, name, created_by, created_at) VALUES ('tio2-ald', 'ALD titanium dioxide', 'ada', '2026-01-05T09:00:00.000Z')`,
      );
      const N = 36;
      // Each write reads last_version, pauses (so that the writers overlap), then writes number + 1: without the
      // lock two writers would read the same number and one would fail on the unique (material_id, number) index.
      const write = async (i: number) => {
        const client = await pools[i % pools.length].connect();
        try {
          await client.query('BEGIN');
          await client.query('SELECT nkledger_write_lock()');
          const { rows } = await client.query<{ last_version: number }>(`SELECT last_version FROM materials WHERE slug = 'tio2-ald'`);
          const number = rows[0].last_version + 1;
          await client.query('SELECT pg_sleep(0.002)');
          await client.query(
            `INSERT INTO material_versions (material_id, number, content, sha256, created_by, created_at) VALUES (1, $1, $2, $3, 'ada', '2026-01-05T09:00:00.000Z')`,
            [number, `{"i":${i}}`, `s${i}`],
          );
          await client.query(`UPDATE materials SET last_version = $1 WHERE slug = 'tio2-ald'`, [number]);
          await client.query('COMMIT');
        } catch (err) {
          await client.query('ROLLBACK');
          throw err;
        } finally {
          client.release();
        }
      };
      await Promise.all(Array.from({ length: N }, (_, i) => write(i)));
      const { rows } = await pools[0].query<{ number: number }>('SELECT number FROM material_versions ORDER BY number');
      expect(rows.map((r) => r.number)).toEqual(Array.from({ length: N }, (_, i) => i + 1));
      const { rows: material } = await pools[0].query<{ last_version: number }>('SELECT last_version FROM materials');
      expect(material[0].last_version).toBe(N);
    } finally {
      await Promise.all(pools.map((p) => p.end()));
    }
  });
});
