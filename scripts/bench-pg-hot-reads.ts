/**
 * What the PostgreSQL registry's hot reads cost per request (src/registry/hot-reads-pg.ts), beside SQLite's twins
 * (src/registry/hot-reads.ts) on the same rows, side by side in one run: the token lookup the API makes on every
 * request on PostgreSQL (postgres-changes.ts says why it is not remembered), the version status it remembers, and
 * the change counters' `other()` (a plain number on PostgreSQL). Starts its own throw-away PostgreSQL server (as
 * the tests do, test/helpers/postgres.ts) on 127.0.0.1.
 *
 *   npx tsx scripts/bench-pg-hot-reads.ts [--rounds 2000] [--concurrency 1]
 */
import Database from 'better-sqlite3';
import { sql } from 'drizzle-orm';
import { drizzle } from 'drizzle-orm/better-sqlite3';
import { migrate } from 'drizzle-orm/better-sqlite3/migrator';
import { parseArgs } from 'node:util';
import { createDatabase, startPostgres } from '../test/helpers/postgres.ts';
import { activeToken, versionStatus } from '../src/registry/hot-reads.ts';
import { pgActiveToken, pgVersionStatus } from '../src/registry/hot-reads-pg.ts';
import { MIGRATIONS_FOLDER, type Registry, sqliteRegistry } from '../src/registry/open.ts';
import { openPostgres, pgWriteTransaction } from '../src/registry/postgres.ts';
import { pgChangeCounters } from '../src/registry/postgres-changes.ts';
import { pgExecute } from '../src/registry/postgres-sql.ts';

const { values } = parseArgs({ options: { rounds: { type: 'string', default: '2000' }, concurrency: { type: 'string', default: '1' } } });
const rounds = Number(values.rounds);
const concurrency = Number(values.concurrency);

const T = '2026-01-05T09:00:00.000Z';
const ROWS = [
  `INSERT INTO materials (slug, name, created_by, created_at, last_version) VALUES ('mgf2-evap', 'Evaporated MgF2', 'ada', '${T}', 1)`,
  `INSERT INTO material_versions (material_id, number, content, sha256, created_by, created_at) VALUES (1, 1, '{}', 'aa', 'ada', '${T}')`,
  `INSERT INTO api_tokens (id, "user", role, token_sha256, created_at, created_by) VALUES ('tok-ada', 'ada', 'editor', 'sha-ada', '${T}', 'ada')`,
];

/** Median and 95th percentile of `n` calls of `op`, `concurrency` at a time, in µs per call. */
async function time(op: () => unknown): Promise<{ median: number; p95: number }> {
  for (let i = 0; i < Math.min(200, rounds); i++) await op(); // warm-up: prepared statements, connections
  const samples: number[] = [];
  for (let i = 0; i < rounds; i += concurrency) {
    const started = performance.now();
    await Promise.all(Array.from({ length: concurrency }, () => op()));
    samples.push(((performance.now() - started) * 1000) / concurrency);
  }
  samples.sort((x, y) => x - y);
  return { median: samples[Math.floor(samples.length / 2)], p95: samples[Math.floor(samples.length * 0.95)] };
}

const server = await startPostgres();
if ('missing' in server) {
  console.error(server.missing);
  process.exit(1);
}
try {
  const handle = await openPostgres(await createDatabase(server.adminUrl, 'nkledger_bench'), { poolSize: Math.max(2, concurrency) });
  await pgWriteTransaction(handle, async () => {
    for (const statement of ROWS) await pgExecute(handle, sql.raw(statement));
  });
  const counters = pgChangeCounters(handle);
  await counters.whenListening();
  const sqlite = new Database(':memory:');
  const db = drizzle(sqlite);
  migrate(db, { migrationsFolder: MIGRATIONS_FOLDER });
  for (const statement of ROWS) sqlite.exec(statement);
  const registry: Registry = sqliteRegistry(sqlite, ':memory:', { readonly: false, created: true });

  const rows: [string, { median: number; p95: number }][] = [
    ['SQLite activeToken', await time(() => activeToken(registry, 'sha-ada'))],
    ['PostgreSQL pgActiveToken', await time(() => pgActiveToken(handle, 'sha-ada'))],
    ['SQLite versionStatus', await time(() => versionStatus(registry, 'mgf2-evap', 1))],
    ['PostgreSQL pgVersionStatus', await time(() => pgVersionStatus(handle, 'mgf2-evap', 1))],
    ['PostgreSQL other() (LISTEN counter)', await time(() => counters.other())],
  ];
  console.log(`${rounds} calls each, ${concurrency} at a time, PostgreSQL ${handle.serverVersion} on 127.0.0.1 (µs per call)`);
  console.log('| read | median µs | p95 µs |\n| --- | ---: | ---: |');
  for (const [name, t] of rows) console.log(`| ${name} | ${t.median.toFixed(1)} | ${t.p95.toFixed(1)} |`);
  await handle.close();
  sqlite.close();
} finally {
  server.stop();
}
