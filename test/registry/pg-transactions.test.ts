/**
 * Transactions on the PostgreSQL registry (src/registry/postgres.ts) and raw rows (postgres-sql.ts) on a real
 * server: a write commits or rolls back whole; inside it `handle.db` is the transaction's (its uncommitted row is
 * seen there and nowhere else); a nested write is a savepoint; the write lock makes writers on two pools (as on two
 * servers) run one at a time and number versions without gaps; a writer that waits too long is refused as `registry-busy`; a serialization failure
 * is retried; a read snapshot sees one state and refuses writes; bigint columns come back as numbers.
 * Skipped with a plain message where PostgreSQL 15+ is not installed.
 */
import { eq, sql } from 'drizzle-orm';
import { afterAll, beforeAll, describe, expect, inject, it } from 'vitest';
import { EnvironmentError } from '../../src/errors.ts';
import { inPgTransaction, openPostgres, pgReadSnapshot, pgWriteTransaction, type PgRegistry } from '../../src/registry/postgres.ts';
import { pgExecute, pgQueryRow, pgQueryRows } from '../../src/registry/postgres-sql.ts';
import { materials, materialVersions, registrySettings } from '../../src/registry/schema-pg.ts';
import { createDatabase, heldOpen } from '../helpers/postgres.ts';

const server = inject('postgres');
if (!server.adminUrl) console.warn(server.missing);

const setting = (key: string, value: string) => ({ key, value, updatedBy: 'ada', updatedAt: '2026-01-05T09:00:00.000Z' });
const sleep = (ms: number) => new Promise((resolve) => setTimeout(resolve, ms));

describe.skipIf(!server.adminUrl)(`transactions on the PostgreSQL registry${server.adminUrl ? '' : ` (${server.missing})`}`, () => {
  let a: PgRegistry;
  let b: PgRegistry;
  beforeAll(async () => {
    const url = await createDatabase(server.adminUrl as string, 'nkledger_tx');
    a = await openPostgres(url, { poolSize: 4 });
    b = await openPostgres(url, { poolSize: 4, lockTimeoutMs: 200 });
  });
  afterAll(async () => {
    await a?.close();
    await b?.close();
  });

  const keys = async (handle: PgRegistry) => (await handle.db.select().from(registrySettings)).map((r) => r.key).sort();

  it('commits: the row is there afterwards for every connection, and the commit is counted', async () => {
    const before = a.commits();
    const result = await pgWriteTransaction(a, async () => {
      await a.db.insert(registrySettings).values(setting('commit_me', '1'));
      return 'done';
    });
    expect(result).toBe('done');
    expect(a.commits()).toBe(before + 1);
    expect(await keys(b)).toContain('commit_me');
  });

  it('inside fn, handle.db sees the uncommitted row; outside (the pool, another handle) nothing, until the commit', async () => {
    const seenInside: string[][] = [];
    const { release, done: write } = await heldOpen(
      (body) => pgWriteTransaction(a, body),
      async () => {
        expect(inPgTransaction(a)).toBe(true);
        await a.db.insert(registrySettings).values(setting('uncommitted', '1'));
        seenInside.push(await keys(a));
      },
    );
    // This code runs outside fn's asynchronous context: a.db is the pool's here.
    expect(inPgTransaction(a)).toBe(false);
    expect(seenInside[0]).toContain('uncommitted');
    expect(await keys(a)).not.toContain('uncommitted');
    expect(await keys(b)).not.toContain('uncommitted');
    release();
    await write;
    expect(await keys(a)).toContain('uncommitted');
  });

  it('rolls back whole when fn throws, and the error comes out unchanged', async () => {
    const before = a.commits();
    const boom = new Error('refused by the service');
    await expect(
      pgWriteTransaction(a, async () => {
        await a.db.insert(registrySettings).values(setting('rolled_back', '1'));
        throw boom;
      }),
    ).rejects.toBe(boom);
    expect(await keys(a)).not.toContain('rolled_back');
    expect(a.commits()).toBe(before);
  });

  it('a write inside a write is a savepoint: its failure undoes only its own rows', async () => {
    await pgWriteTransaction(a, async () => {
      await a.db.insert(registrySettings).values(setting('outer', '1'));
      await expect(
        pgWriteTransaction(a, async () => {
          await a.db.insert(registrySettings).values(setting('inner', '1'));
          throw new Error('inner refused');
        }),
      ).rejects.toThrow('inner refused');
      await pgWriteTransaction(a, async () => {
        await a.db.insert(registrySettings).values(setting('inner_ok', '1'));
      });
    });
    const all = await keys(b);
    expect(all).toContain('outer');
    expect(all).toContain('inner_ok');
    expect(all).not.toContain('inner');
  });

  it('a transaction of another handle inside one keeps both bound: each handle.db is its own transaction', async () => {
    await pgWriteTransaction(a, async () => {
      await a.db.insert(registrySettings).values(setting('outer_a', '1'));
      await pgReadSnapshot(b, async () => {
        expect(inPgTransaction(a)).toBe(true);
        expect(inPgTransaction(b)).toBe(true);
        expect(await keys(a)).toContain('outer_a'); // a's transaction, uncommitted
        expect(await keys(b)).not.toContain('outer_a'); // b's snapshot
      });
      expect(inPgTransaction(b)).toBe(false);
    });
  });

  it('the write lock serializes writers on two pools: the second starts after the first commits', async () => {
    const events: string[] = [];
    let firstHasLock!: () => void;
    const locked = new Promise<void>((resolve) => {
      firstHasLock = resolve;
    });
    const first = pgWriteTransaction(a, async () => {
      events.push('a start');
      firstHasLock();
      await sleep(100);
      await a.db.insert(registrySettings).values(setting('serial_a', '1'));
      events.push('a end');
    });
    await locked;
    const second = pgWriteTransaction(b, async () => {
      events.push('b start');
      // READ COMMITTED after the lock: the first writer's row is already visible.
      const seen = (await b.db.select().from(registrySettings).where(eq(registrySettings.key, 'serial_a'))).length;
      events.push(`b sees ${seen}`);
    });
    await Promise.all([first, second]);
    expect(events).toEqual(['a start', 'a end', 'b start', 'b sees 1']);
  });

  it('a writer that waits for the lock longer than lockTimeoutMs is refused as registry-busy (exit 4), nothing written', async () => {
    const holder = await heldOpen((body) => pgWriteTransaction(a, body));
    const err = await pgWriteTransaction(b, async () => {
      await b.db.insert(registrySettings).values(setting('never', '1'));
    }).catch((e: unknown) => e);
    holder.release();
    await holder.done;
    expect(err).toBeInstanceOf(EnvironmentError);
    expect(err).toMatchObject({ rule: 'registry-busy' });
    expect((err as Error).message).toContain('55P03');
    expect(await keys(a)).not.toContain('never');
  });

  it('a serialization failure (SQLSTATE 40001) runs the whole transaction again', async () => {
    let attempts = 0;
    await pgWriteTransaction(a, async () => {
      attempts++;
      await a.db.insert(registrySettings).values(setting(`retry_${attempts}`, '1'));
      if (attempts === 1) await pgExecute(a, sql`DO $$ BEGIN RAISE EXCEPTION 'collided' USING ERRCODE = 'serialization_failure'; END $$`);
    });
    expect(attempts).toBe(2);
    const all = await keys(a);
    expect(all).toContain('retry_2');
    expect(all).not.toContain('retry_1');
  });

  it('a read snapshot sees one state while a writer commits, and refuses a write (registry-read-only)', async () => {
    const counts: number[] = [];
    await pgReadSnapshot(a, async () => {
      counts.push((await a.db.select().from(registrySettings)).length);
      await pgWriteTransaction(b, async () => {
        await b.db.insert(registrySettings).values(setting('during_snapshot', '1'));
      });
      counts.push((await a.db.select().from(registrySettings)).length);
    });
    expect(counts[1]).toBe(counts[0]);
    expect(await keys(a)).toContain('during_snapshot');
    const err = await pgReadSnapshot(a, () =>
      a.db
        .insert(registrySettings)
        .values(setting('snapshot_write', '1'))
        .then(() => undefined),
    ).catch((e: unknown) => e);
    expect(err).toBeInstanceOf(EnvironmentError);
    expect(err).toMatchObject({ rule: 'registry-read-only' });
  });

  it('writers through three handles (three servers) at once number versions 1..N without gaps or repeats', async () => {
    const url = a.pool.options.connectionString as string;
    const handles = [a, b, await openPostgres(url, { poolSize: 3, lockTimeoutMs: 30_000 })];
    try {
      await pgWriteTransaction(a, () =>
        a.db.insert(materials).values({ slug: 'zno-sputter', name: 'Sputtered ZnO', createdBy: 'ada', createdAt: '2026-01-05T09:00:00.000Z' }),
      );
      const N = 30;
      // What a service write does: read last_version through handle.db, pause (so the writers overlap), write number + 1.
      const write = (handle: PgRegistry, i: number) =>
        pgWriteTransaction(handle, async () => {
          const [m] = await handle.db.select().from(materials).where(eq(materials.slug, 'zno-sputter'));
          await sleep(1);
          const number = m.lastVersion + 1;
          await handle.db.insert(materialVersions).values({
            materialId: m.id,
            number,
            content: `{"i":${i}}`,
            sha256: `s${i}`,
            createdBy: 'ada',
            createdAt: '2026-01-05T09:00:00.000Z',
          });
          await handle.db.update(materials).set({ lastVersion: number }).where(eq(materials.id, m.id));
          return number;
        });
      // b's short lock timeout is for the busy test: writers here go through a and the third handle.
      const numbers = await Promise.all(Array.from({ length: N }, (_, i) => write(i % 2 === 0 ? a : handles[2], i)));
      expect([...numbers].sort((x, y) => x - y)).toEqual(Array.from({ length: N }, (_, i) => i + 1));
      const stored = await b.db.select({ number: materialVersions.number }).from(materialVersions).orderBy(materialVersions.number);
      expect(stored.map((r) => r.number)).toEqual(Array.from({ length: N }, (_, i) => i + 1));
    } finally {
      await handles[2].close();
    }
  });

  it('raw rows: count(*) and other bigint columns are numbers, as SQLite gives them; pgExecute returns the rows written', async () => {
    const row = await pgQueryRow<{ n: number; total: number; big: number; label: string }>(
      a,
      sql`SELECT count(*) AS n, sum(length(key)) AS total, 9007199254740991::bigint AS big, ${'x'}::text AS label FROM registry_settings`,
    );
    expect(typeof row?.n).toBe('number');
    expect(row?.n).toBe((await keys(a)).length);
    expect(typeof row?.total).toBe('number');
    expect(row?.big).toBe(Number.MAX_SAFE_INTEGER);
    expect(row?.label).toBe('x');
    const rows = await pgQueryRows<{ key: string }>(a, sql`SELECT key FROM registry_settings WHERE key LIKE ${'serial_%'}`);
    expect(rows).toEqual([{ key: 'serial_a' }]);
    const written = await pgWriteTransaction(a, () => pgExecute(a, sql`UPDATE registry_settings SET value = '2' WHERE key LIKE 'retry_%'`));
    expect(written).toBe(1);
    expect(await pgQueryRow(a, sql`SELECT 1 AS one WHERE false`)).toBeUndefined();
  });
});
