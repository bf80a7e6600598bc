/**
 * Write transactions on a Registry's one connection (src/registry/transaction.ts): concurrent ones run one
 * after the other, a write inside a write is a savepoint of it (as better-sqlite3's nested transactions
 * were, https://github.com/WiseLibs/better-sqlite3/blob/master/docs/api.md#transactionfunction--function),
 * and a failure rolls back everything its transaction wrote.
 */
import { afterEach, beforeEach, describe, expect, it } from 'vitest';
import { ConflictError } from '../../src/errors.ts';
import { writeTransaction } from '../../src/registry/records.ts';
import { inTransaction } from '../../src/registry/transaction.ts';
import { importMeasurements } from '../../src/service/import-measurement.ts';
import { createMaterial, listMaterials } from '../../src/service/registry.ts';
import { BACKENDS, rawSql, tempRegistry, type TempRegistry } from './helpers.ts';

describe.each(BACKENDS)('transactions on %s', (backend) => {
  let t: TempRegistry;
  beforeEach(async () => {
    t = await tempRegistry(backend);
  });
  afterEach(() => t.cleanup());

  const slugs = async () => (await listMaterials(t.registry)).map((m) => m.slug);
  const count = async (table: string) => Number((await rawSql<{ n: unknown }>(t.registry, `SELECT count(*) AS n FROM ${table}`))[0].n);
  const auditRows = () => count('audit_log');

  describe('writeTransaction', () => {
    it('runs concurrent writes one at a time, each whole', async () => {
      const order: string[] = [];
      const write = (name: string) =>
        writeTransaction(t.registry, async () => {
          order.push(`begin ${name}`);
          await createMaterial(t.registry, { slug: name, name }, 'ada');
          order.push(`end ${name}`);
        });
      await Promise.all([write('m-a'), write('m-b'), write('m-c')]);
      // One at a time: every begin is followed by its own end. SQLite's queue keeps the order they were asked in;
      // PostgreSQL's writers queue on the write lock from separate connections, in whatever order they reach it.
      for (let i = 0; i < order.length; i += 2) expect(order[i + 1]).toBe(order[i].replace('begin', 'end'));
      if (backend === 'sqlite') expect(order).toEqual(['begin m-a', 'end m-a', 'begin m-b', 'end m-b', 'begin m-c', 'end m-c']);
      expect(await slugs()).toEqual(['m-a', 'm-b', 'm-c']);
      expect(inTransaction(t.registry)).toBe(false);
    });

    it('rolls back everything a failed transaction wrote, and the next one runs', async () => {
      const before = await auditRows();
      await expect(
        writeTransaction(t.registry, async () => {
          await createMaterial(t.registry, { slug: 'lost', name: 'Lost' }, 'ada');
          throw new Error('fails after writing');
        }),
      ).rejects.toThrow('fails after writing');
      expect(await slugs()).toEqual([]);
      expect(await auditRows()).toBe(before);
      await createMaterial(t.registry, { slug: 'kept', name: 'Kept' }, 'ada');
      expect(await slugs()).toEqual(['kept']);
    });

    it('a write inside a write joins it as a savepoint: an inner failure caught outside undoes only the inner writes', async () => {
      await writeTransaction(t.registry, async () => {
        expect(inTransaction(t.registry)).toBe(true);
        await createMaterial(t.registry, { slug: 'outer', name: 'Outer' }, 'ada');
        await expect(createMaterial(t.registry, { slug: 'outer', name: 'Again' }, 'ada')).rejects.toThrow(ConflictError);
        await expect(
          writeTransaction(t.registry, async () => {
            await createMaterial(t.registry, { slug: 'inner', name: 'Inner' }, 'ada');
            throw new Error('inner fails');
          }),
        ).rejects.toThrow('inner fails');
      });
      expect(inTransaction(t.registry)).toBe(false);
      expect(await slugs()).toEqual(['outer']);
    });

    it('a batch import is all or none: a duplicate in it rolls back the files before it', async () => {
      await createMaterial(t.registry, { slug: 'film', name: 'Film' }, 'ada');
      const file = (a: number) => ({
        slug: 'film',
        file: `run-${a}.csv`,
        kk: false,
        bytes: new TextEncoder().encode(`wavelength_nm,n,k\n400,${a},0\n500,${a - 0.01},0\n600,${a - 0.02},0\n`),
      });
      await expect(importMeasurements(t.registry, [file(1.5), file(1.6), file(1.5)], 'ada')).rejects.toThrow(/already stored/);
      expect(await count('material_versions')).toBe(0);
      expect((await importMeasurements(t.registry, [file(1.5), file(1.6)], 'ada')).map((v) => v.ref)).toEqual(['film@1', 'film@2']);
    });
  });
});
