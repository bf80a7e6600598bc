/**
 * The API's hot reads on PostgreSQL (src/registry/hot-reads-pg.ts) on a real server, against the same rows read
 * by SQLite's twins (src/registry/hot-reads.ts): a version's status, an unrevoked token (a revocation committed
 * through another handle — another server — is seen by the very next lookup, no notice needed), and the note of a
 * token's last use, which never waits: not for a writer holding the write lock, not for a writer holding the
 * token's row, and never throws. Skipped with a plain message where PostgreSQL 15+ is not installed.
 */
import Database from 'better-sqlite3';
import { sql } from 'drizzle-orm';
import { drizzle as drizzleSqlite } from 'drizzle-orm/better-sqlite3';
import { migrate as migrateSqlite } from 'drizzle-orm/better-sqlite3/migrator';
import { afterAll, beforeAll, describe, expect, inject, it } from 'vitest';
import { activeToken, versionStatus } from '../../src/registry/hot-reads.ts';
import { pgActiveToken, pgNoteTokenUse, pgVersionStatus } from '../../src/registry/hot-reads-pg.ts';
import { MIGRATIONS_FOLDER, type Registry, sqliteRegistry } from '../../src/registry/open.ts';
import { openPostgres, pgWriteTransaction, type PgRegistry } from '../../src/registry/postgres.ts';
import { pgExecute, pgQueryRow } from '../../src/registry/postgres-sql.ts';
import { createDatabase, heldOpen } from '../helpers/postgres.ts';

const server = inject('postgres');
if (!server.adminUrl) console.warn(server.missing);

const T = '2026-01-05T09:00:00.000Z';
const ROWS = [
  `INSERT INTO materials (slug, name, created_by, created_at, last_version) VALUES ('mgf2-evap', 'Evaporated MgF2', 'ada', '${T}', 2)`,
  `INSERT INTO material_versions (material_id, number, content, sha256, created_by, created_at) VALUES (1, 1, '{}', 'aa', 'ada', '${T}')`,
  `INSERT INTO material_versions (material_id, number, status, content, sha256, created_by, created_at, approved_by, approved_at, self_approved)
     VALUES (1, 2, 'approved', '{"t":1}', 'bb', 'ada', '${T}', 'ben', '${T}', FALSE)`,
  `INSERT INTO api_tokens (id, "user", role, token_sha256, created_at, created_by, expires_at) VALUES ('tok-ada', 'ada', 'editor', 'sha-ada', '${T}', 'ada', '2027-01-01T00:00:00.000Z')`,
  `INSERT INTO api_tokens (id, "user", role, token_sha256, created_at, created_by) VALUES ('tok-ben', 'ben', 'approver', 'sha-ben', '${T}', 'ada')`,
];

describe.skipIf(!server.adminUrl)(`hot reads on PostgreSQL${server.adminUrl ? '' : ` (${server.missing})`}`, () => {
  let a: PgRegistry;
  let b: PgRegistry;
  let sqlite: Database.Database;
  let onSqlite: Registry;
  beforeAll(async () => {
    const url = await createDatabase(server.adminUrl as string, 'nkledger_hot');
    a = await openPostgres(url, { poolSize: 3 });
    b = await openPostgres(url, { poolSize: 3 });
    await pgWriteTransaction(a, async () => {
      for (const statement of ROWS) await pgExecute(a, sql.raw(statement));
    });
    sqlite = new Database(':memory:');
    const db = drizzleSqlite(sqlite);
    migrateSqlite(db, { migrationsFolder: MIGRATIONS_FOLDER });
    for (const statement of ROWS) sqlite.exec(statement.replace('FALSE', '0'));
    // The hot reads of SQLite need only `sqlite` of a Registry.
    onSqlite = sqliteRegistry(sqlite, ':memory:', { readonly: false, created: true });
  });
  afterAll(async () => {
    await a?.close();
    await b?.close();
    sqlite?.close();
  });

  it('pgVersionStatus answers as SQLite does: draft, approved, and undefined for what does not exist', async () => {
    for (const [slug, number] of [
      ['mgf2-evap', 1],
      ['mgf2-evap', 2],
      ['mgf2-evap', 3],
      ['nope', 1],
    ] as const) {
      expect(await pgVersionStatus(a, slug, number)).toBe(await versionStatus(onSqlite, slug, number));
    }
    expect(await pgVersionStatus(a, 'mgf2-evap', 2)).toBe('approved');
  });

  it('pgActiveToken returns the same object as SQLite for each token, undefined for an unknown hash', async () => {
    for (const hash of ['sha-ada', 'sha-ben', 'sha-nobody']) expect(await pgActiveToken(a, hash)).toEqual(await activeToken(onSqlite, hash));
    expect(await pgActiveToken(a, 'sha-ada')).toEqual({
      tokenId: 'tok-ada',
      user: 'ada',
      role: 'editor',
      expiresAt: '2027-01-01T00:00:00.000Z',
      lastUsedAt: null,
    });
  });

  it('a token revoked through another handle (another server) is refused by the very next lookup', async () => {
    expect(await pgActiveToken(b, 'sha-ben')).toBeDefined();
    await pgWriteTransaction(a, () => pgExecute(a, sql`UPDATE api_tokens SET revoked_at = ${T}, revoked_by = 'ada' WHERE id = 'tok-ben'`));
    expect(await pgActiveToken(b, 'sha-ben')).toBeUndefined();
  });

  it('pgNoteTokenUse writes last use, and does not wait while another server holds the write lock', async () => {
    const writer = await heldOpen((body) => pgWriteTransaction(b, body));
    try {
      const started = performance.now();
      expect(await pgNoteTokenUse(a, 'tok-ada', '2026-02-01T08:00:00.000Z')).toBe(true);
      expect(performance.now() - started).toBeLessThan(1000);
    } finally {
      writer.release();
      await writer.done;
    }
    expect((await pgActiveToken(a, 'sha-ada'))?.lastUsedAt).toBe('2026-02-01T08:00:00.000Z');
  });

  it('pgNoteTokenUse skips, without waiting, a token row that a writer is changing, and never throws', async () => {
    const { release, done: writer } = await heldOpen(
      (body) => pgWriteTransaction(b, body),
      () => pgExecute(b, sql`UPDATE api_tokens SET expires_at = '2028-01-01T00:00:00.000Z' WHERE id = 'tok-ada'`),
    );
    try {
      const started = performance.now();
      expect(await pgNoteTokenUse(a, 'tok-ada', '2026-03-01T08:00:00.000Z')).toBe(false);
      expect(performance.now() - started).toBeLessThan(1000);
    } finally {
      release();
      await writer;
    }
    const row = await pgQueryRow<{ lastUsedAt: string; expiresAt: string }>(
      a,
      sql`SELECT last_used_at AS "lastUsedAt", expires_at AS "expiresAt" FROM api_tokens WHERE id = 'tok-ada'`,
    );
    expect(row).toEqual({ lastUsedAt: '2026-02-01T08:00:00.000Z', expiresAt: '2028-01-01T00:00:00.000Z' });
    // A closed pool: skipped, not thrown.
    const closed = await openPostgres(a.pool.options.connectionString as string, { poolSize: 1 });
    await closed.close();
    expect(await pgNoteTokenUse(closed, 'tok-ada', '2026-04-01T08:00:00.000Z')).toBe(false);
  });

  it('inside a write transaction the hot reads see its uncommitted rows (they use handle.db)', async () => {
    await pgWriteTransaction(a, async () => {
      await pgExecute(
        a,
        sql`UPDATE material_versions SET status = 'approved', approved_by = 'ben', approved_at = ${T}, self_approved = false WHERE number = 1`,
      );
      expect(await pgVersionStatus(a, 'mgf2-evap', 1)).toBe('approved');
      expect(await pgVersionStatus(b, 'mgf2-evap', 1)).toBe('draft');
      throw new Error('undo');
    }).catch(() => {});
    expect(await pgVersionStatus(a, 'mgf2-evap', 1)).toBe('draft');
  });
});
