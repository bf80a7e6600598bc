/**
 * CONTENT_SUMMARY_PG (src/registry/content-summary-pg.ts) cuts the same summary out of a version's content on
 * PostgreSQL as CONTENT_SUMMARY of src/registry/records.ts does on SQLite. The SQLite expression is read from
 * records.ts itself (so the two cannot drift apart unnoticed) and run by SQLite's JSON functions on the same
 * contents; both results are also checked against the summary written out by hand from the content.
 * Skipped with a plain message where PostgreSQL 15+ is not installed.
 */
import Database from 'better-sqlite3';
import { asc } from 'drizzle-orm';
import { drizzle as drizzlePg } from 'drizzle-orm/node-postgres';
import { migrate as migratePg } from 'drizzle-orm/node-postgres/migrator';
import { readFileSync } from 'node:fs';
import { fileURLToPath } from 'node:url';
import pg from 'pg';
import { afterAll, beforeAll, describe, expect, inject, it } from 'vitest';
import { CONTENT_SUMMARY_PG } from '../../src/registry/content-summary-pg.ts';
import { materialVersions } from '../../src/registry/schema-pg.ts';
import { createDatabase } from '../helpers/postgres.ts';

const table = (wavelengthNm: number[]) => ({ wavelengthNm, n: wavelengthNm.map(() => 2.01), k: wavelengthNm.map(() => 0) });

/** Contents as canonical JSON stores them, and the summary each must give. */
const CONTENTS: { content: unknown; summary: unknown }[] = [
  {
    content: {
      table: table([300, 412.5, 1000.25]),
      fit: { model: 'cauchy', range_nm: [300, 1000.25], parameters: { A: 1.98 } },
      kk: { verdict: 'pass' },
    },
    summary: {
      table: { wavelengthNm: [300, 1000.25], n: [], k: [] },
      fit: { model: 'cauchy', range_nm: [300, 1000.25], parameters: {} },
      kk: { verdict: 'pass' },
    },
  },
  {
    content: { table: table([633]), fit: null, kk: null },
    summary: { table: { wavelengthNm: [633, 633], n: [], k: [] }, fit: null, kk: null },
  },
  {
    content: { table: null, fit: { model: 'tauc-lorentz', parameters: {} }, kk: null },
    summary: { table: null, fit: { model: 'tauc-lorentz', range_nm: null, parameters: {} }, kk: null },
  },
  {
    content: { table: table([250.125, 2500.5]), fit: null, kk: { verdict: 'fail', worst: 0.2 } },
    summary: { table: { wavelengthNm: [250.125, 2500.5], n: [], k: [] }, fit: null, kk: { verdict: 'fail' } },
  },
];

/** The SQLite expression as records.ts has it. */
function sqliteSummaryExpression(): string {
  const source = readFileSync(fileURLToPath(new URL('../../src/registry/records.ts', import.meta.url)), 'utf8');
  const found = /const CONTENT_SUMMARY = sql<string>`([\s\S]*?)`;/.exec(source);
  if (!found) throw new Error('CONTENT_SUMMARY not found in src/registry/records.ts');
  return found[1];
}

const server = inject('postgres');
if (!server.adminUrl) console.warn(server.missing);

describe.skipIf(!server.adminUrl)(`the version summary cut out by PostgreSQL${server.adminUrl ? '' : ` (${server.missing})`}`, () => {
  let pool: pg.Pool;
  beforeAll(async () => {
    pool = new pg.Pool({ connectionString: await createDatabase(server.adminUrl as string, 'nkledger_summary'), max: 2 });
    await migratePg(drizzlePg(pool), { migrationsFolder: fileURLToPath(new URL('../../drizzle-pg', import.meta.url)) });
    await pool.query(
      `INSERT INTO materials (slug, name, created_by, created_at) VALUES ('sio2-tox', 'Thermal oxide', 'ada', '2026-01-05T09:00:00.000Z')`,
    );
    for (const [i, { content }] of CONTENTS.entries()) {
      await pool.query(
        `INSERT INTO material_versions (material_id, number, content, sha256, created_by, created_at) VALUES (1, $1, $2, $3, 'ada', '2026-01-05T09:00:00.000Z')`,
        [i + 1, JSON.stringify(content), `s${i}`],
      );
    }
  });
  afterAll(async () => {
    await pool?.end();
  });

  it('gives what SQLite gives, and what the content says', async () => {
    const rows = await drizzlePg(pool).select({ summary: CONTENT_SUMMARY_PG }).from(materialVersions).orderBy(asc(materialVersions.number));
    const onPg = rows.map((r) => JSON.parse(r.summary));

    const sqlite = new Database(':memory:');
    try {
      sqlite.exec('CREATE TABLE material_versions (number integer, content text)');
      const insert = sqlite.prepare('INSERT INTO material_versions (number, content) VALUES (?, ?)');
      for (const [i, { content }] of CONTENTS.entries()) insert.run(i + 1, JSON.stringify(content));
      const onSqlite = (
        sqlite.prepare(`SELECT ${sqliteSummaryExpression()} AS summary FROM material_versions ORDER BY number`).all() as { summary: string }[]
      ).map((r) => JSON.parse(r.summary));
      expect(onPg).toEqual(onSqlite);
    } finally {
      sqlite.close();
    }
    expect(onPg).toEqual(CONTENTS.map((c) => c.summary));
  });
});
