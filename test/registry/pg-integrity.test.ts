/**
 * The PostgreSQL tamper check of the registry's own defences (src/registry/integrity-pg.ts) on a real server:
 * a freshly migrated database holds exactly PG_DEFENCES (so a migration that changes a trigger or function
 * must change the expectation too), the check runs in a READ ONLY transaction, and each kind of tampering —
 * a trigger dropped, disabled, replaced by one that never fires, one added, a function body changed — is
 * reported under its name. Skipped with a plain message where PostgreSQL 15+ is not installed.
 */
import { drizzle as drizzlePg } from 'drizzle-orm/node-postgres';
import { migrate as migratePg } from 'drizzle-orm/node-postgres/migrator';
import { fileURLToPath } from 'node:url';
import pg from 'pg';
import { afterAll, beforeAll, describe, expect, inject, it } from 'vitest';
import { checkPgDefences, PG_DEFENCES, readPgDefences } from '../../src/registry/integrity-pg.ts';
import { createDatabase } from '../helpers/postgres.ts';

const PG_FOLDER = fileURLToPath(new URL('../../drizzle-pg', import.meta.url));
const clean = { missing: [], altered: [], unexpected: [], disabled: [] };

const server = inject('postgres');
if (!server.adminUrl) console.warn(server.missing);

describe.skipIf(!server.adminUrl)(`tamper checks of the PostgreSQL registry's defences${server.adminUrl ? '' : ` (${server.missing})`}`, () => {
  let pool: pg.Pool;
  beforeAll(async () => {
    pool = new pg.Pool({ connectionString: await createDatabase(server.adminUrl as string, 'nkledger_integrity'), max: 2 });
    await migratePg(drizzlePg(pool), { migrationsFolder: PG_FOLDER });
  });
  afterAll(async () => {
    await pool?.end();
  });

  it('a freshly migrated database holds exactly the expected triggers and functions', async () => {
    const found = await readPgDefences(pool);
    expect(Object.fromEntries(found.triggers.map((t) => [t.name, t.definition]))).toEqual(PG_DEFENCES.triggers);
    expect(Object.fromEntries(found.functions.map((f) => [f.name, `${f.language}:${f.body}`]))).toEqual(PG_DEFENCES.functions);
    expect(await checkPgDefences(pool)).toEqual(clean);
  });

  it('runs in a READ ONLY transaction, which refuses any write', async () => {
    const client = await pool.connect();
    try {
      await client.query('BEGIN READ ONLY');
      expect(await checkPgDefences(client)).toEqual(clean);
      const write = client.query(`INSERT INTO registry_settings (key, value, updated_by, updated_at) VALUES ('k', '1', 'ada', 'now')`);
      await expect(write).rejects.toMatchObject({ code: '25006' }); // read_only_sql_transaction
    } finally {
      await client.query('ROLLBACK');
      client.release();
    }
  });

  it.each([
    ['a trigger dropped', 'DROP TRIGGER materials_no_delete ON materials', { ...clean, missing: ['materials_no_delete'] }],
    ['a trigger disabled', 'ALTER TABLE audit_log DISABLE TRIGGER audit_log_no_update', { ...clean, disabled: ['audit_log_no_update'] }],
    [
      'a trigger replaced by one that never fires',
      `DROP TRIGGER material_versions_no_delete ON material_versions;
       CREATE TRIGGER material_versions_no_delete BEFORE DELETE ON material_versions FOR EACH ROW WHEN (false)
       EXECUTE FUNCTION nkledger_refuse('nkledger: versions are never deleted (retire or withdraw instead)')`,
      { ...clean, altered: ['material_versions_no_delete'] },
    ],
    [
      'a trigger added',
      `CREATE TRIGGER materials_touch BEFORE UPDATE ON materials FOR EACH ROW EXECUTE FUNCTION nkledger_audit_chain_append()`,
      { ...clean, unexpected: ['materials_touch'] },
    ],
    [
      'the refusing function made harmless',
      `CREATE OR REPLACE FUNCTION nkledger_refuse() RETURNS trigger LANGUAGE plpgsql AS $$ BEGIN RETURN OLD; END; $$`,
      { ...clean, altered: ['function nkledger_refuse'] },
    ],
  ])('reports %s', async (_what, tamper, report) => {
    const client = await pool.connect();
    try {
      await client.query('BEGIN');
      await client.query(tamper);
      expect(await checkPgDefences(client)).toEqual(report);
    } finally {
      await client.query('ROLLBACK');
      client.release();
    }
  });
});
