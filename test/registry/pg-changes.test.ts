/**
 * Change detection across servers on PostgreSQL (src/registry/postgres-changes.ts, drizzle-pg/0002_change_notify.sql)
 * on a real server. Two handles on one database stand for two `nkledger serve` processes: a commit through A that
 * writes materials, material_versions, api_tokens or registry_settings reaches B's `other()` by LISTEN/NOTIFY; a
 * rolled-back write and a write to another table send nothing; A's own commits move A's `own()`. A listening
 * connection ended by the server (pg_terminate_backend) makes `other()` report a change on every call until it
 * listens again, and it does listen again by itself. Waits are bounded: a notice that does not come fails the
 * test. Skipped with a plain message where PostgreSQL 15+ is not installed.
 */
import { sql } from 'drizzle-orm';
import pg from 'pg';
import { afterAll, beforeAll, describe, expect, inject, it } from 'vitest';
import { openPostgres, pgWriteTransaction, type PgRegistry } from '../../src/registry/postgres.ts';
import { CHANGE_CHANNEL, pgChangeCounters, type PgChangeCounters } from '../../src/registry/postgres-changes.ts';
import { pgExecute } from '../../src/registry/postgres-sql.ts';
import { createDatabase } from '../helpers/postgres.ts';

const server = inject('postgres');
if (!server.adminUrl) console.warn(server.missing);

const sleep = (ms: number) => new Promise((resolve) => setTimeout(resolve, ms));

/** Wait until `check()` holds, polling every 5 ms for at most `ms`; false when it never did. */
async function within(ms: number, check: () => boolean): Promise<boolean> {
  const end = Date.now() + ms;
  while (Date.now() < end) {
    if (check()) return true;
    await sleep(5);
  }
  return check();
}

const T = '2026-01-05T09:00:00.000Z';

describe.skipIf(!server.adminUrl)(`change notices between servers on PostgreSQL${server.adminUrl ? '' : ` (${server.missing})`}`, () => {
  let a: PgRegistry;
  let b: PgRegistry;
  let changesA: PgChangeCounters;
  let changesB: PgChangeCounters;
  beforeAll(async () => {
    const url = await createDatabase(server.adminUrl as string, 'nkledger_notify');
    a = await openPostgres(url, { poolSize: 3 });
    b = await openPostgres(url, { poolSize: 3 });
    changesA = pgChangeCounters(a);
    changesB = pgChangeCounters(b, { minReconnectMs: 20 });
    await Promise.all([changesA.whenListening(), changesB.whenListening()]);
  });
  afterAll(async () => {
    await a?.close();
    await b?.close();
  });

  /** B's `other()` moves within 2 s after `write` (and stays put before it). */
  async function seenByB(write: () => Promise<unknown>): Promise<boolean> {
    const before = changesB.other();
    expect(changesB.other()).toBe(before); // listening: reading it changes nothing
    await write();
    return within(2000, () => changesB.other() !== before);
  }

  it.each([
    ['materials', `INSERT INTO materials (slug, name, created_by, created_at) VALUES ('tio2-ald', 'ALD titania', 'ada', '${T}')`],
    [
      'material_versions',
      `INSERT INTO material_versions (material_id, number, content, sha256, created_by, created_at) VALUES ((SELECT id FROM materials WHERE slug = 'tio2-ald'), 1, '{}', 'aa', 'ada', '${T}')`,
    ],
    [
      'material_versions (a status change)',
      `UPDATE material_versions SET status = 'withdrawn', withdrawn_by = 'ada', withdrawn_at = '${T}', withdraw_reason = 'wrong sample'`,
    ],
    [
      'api_tokens',
      `INSERT INTO api_tokens (id, "user", role, token_sha256, created_at, created_by) VALUES ('t1', 'ada', 'editor', 'h1', '${T}', 'ada')`,
    ],
    ['api_tokens (a revocation)', `UPDATE api_tokens SET revoked_at = '${T}', revoked_by = 'ben' WHERE id = 't1'`],
    ['registry_settings', `INSERT INTO registry_settings (key, value, updated_by, updated_at) VALUES ('writes', '"server-only"', 'ada', '${T}')`],
  ])('a commit through A that writes %s is seen by B', async (_table, statement) => {
    const ownBefore = changesA.own();
    expect(await seenByB(() => pgWriteTransaction(a, () => pgExecute(a, sql.raw(statement))))).toBe(true);
    expect(changesA.own()).toBe(ownBefore + 1);
  });

  it('the notice names the table (payload) on the channel nkledger_changes', async () => {
    const listener = new pg.Client({ connectionString: a.pool.options.connectionString });
    await listener.connect();
    const payloads: string[] = [];
    listener.on('notification', (n) => payloads.push(`${n.channel}:${n.payload}`));
    try {
      await listener.query(`LISTEN ${CHANGE_CHANNEL}`);
      await pgWriteTransaction(a, () => pgExecute(a, sql`UPDATE registry_settings SET value = '"anyone"' WHERE key = 'writes'`));
      expect(await within(2000, () => payloads.length > 0)).toBe(true);
      expect(payloads).toEqual([`${CHANGE_CHANNEL}:registry_settings`]);
    } finally {
      await listener.end();
    }
  });

  it('a rolled-back write sends nothing; neither does a write to a table no memo reads (audit_log)', async () => {
    const before = changesB.other();
    await pgWriteTransaction(a, async () => {
      await pgExecute(a, sql`UPDATE registry_settings SET value = '"server-only"' WHERE key = 'writes'`);
      throw new Error('refused');
    }).catch(() => {});
    await pgWriteTransaction(a, () =>
      pgExecute(a, sql`INSERT INTO audit_log (at, actor, action, hash) VALUES (${T}, 'nkledger', 'chain.genesis', 'g1')`),
    );
    // A notice would arrive within milliseconds (the commit-to-notice delay measured by the tests above).
    await sleep(200);
    expect(changesB.other()).toBe(before);
  });

  it('a lost listening connection: a change on every call until it listens again, then by itself it listens again', async () => {
    const pid = changesB.listenerPid();
    expect(pid).not.toBeNull();
    const admin = new pg.Client({ connectionString: server.adminUrl as string });
    await admin.connect();
    try {
      await admin.query('SELECT pg_terminate_backend($1)', [pid]);
    } finally {
      await admin.end();
    }
    expect(await within(2000, () => !changesB.listening())).toBe(true);
    const seen = [changesB.other(), changesB.other(), changesB.other()];
    expect(new Set(seen).size).toBe(3);
    await Promise.race([changesB.whenListening(), sleep(5000)]);
    expect(changesB.listening()).toBe(true);
    expect(changesB.listenerPid()).not.toBe(pid);
    const settled = changesB.other();
    expect(changesB.other()).toBe(settled);
    // Notices reach the new connection.
    expect(await seenByB(() => pgWriteTransaction(a, () => pgExecute(a, sql`UPDATE materials SET name = 'ALD titanium dioxide'`)))).toBe(true);
  });

  it('before the first LISTEN every call is a change; closing the handle stops listening and reconnecting', async () => {
    const url = a.pool.options.connectionString as string;
    const c = await openPostgres(url, { poolSize: 1 });
    const counters = pgChangeCounters(c);
    // Not listening yet: nothing may be trusted, every call is a change.
    expect(counters.listening()).toBe(false);
    expect(counters.other()).not.toBe(counters.other());
    await counters.whenListening();
    await c.close();
    expect(counters.listening()).toBe(false);
    await sleep(100);
    expect(counters.listening()).toBe(false);
  });
});
