import { afterEach, beforeEach, describe, expect, it } from 'vitest';
import { InputError } from '../../src/errors.ts';
import { chainHead } from '../../src/registry/chain.ts';
import {
  approve,
  canonicalJson,
  createMaterial,
  emptyLockfile,
  importVersion,
  lockAdd,
  lockOutdated,
  lockVerify,
  parseLockfile,
  retire,
  serializeLockfile,
  withdraw,
  type Lockfile,
} from '../../src/service/registry.ts';
import { BACKENDS, rawSql, withTriggerLifted, cauchyTable, tempRegistry, type TempRegistry } from './helpers.ts';

describe.each(BACKENDS)('lockfiles on %s', (backend) => {
  let t: TempRegistry;
  let lock: Lockfile;
  beforeEach(async () => {
    t = await tempRegistry(backend);
    for (const slug of ['sio2', 'ta2o5']) {
      await createMaterial(t.registry, { slug, name: slug }, 'ada');
      await importVersion(t.registry, { slug, table: cauchyTable(slug === 'sio2' ? 1.45 : 2.1) }, 'ada');
      await approve(t.registry, `${slug}@1`, 'bob');
    }
    lock = (await lockAdd(t.registry, emptyLockfile(), 'sio2')).lock;
    lock = (await lockAdd(t.registry, lock, 'ta2o5@1')).lock;
  });
  afterEach(() => t.cleanup());

  describe('lockfiles', () => {
    it('round-trips through its JSON format and verifies clean', async () => {
      const text = serializeLockfile(lock);
      expect(JSON.parse(text)).toMatchObject({
        format: 'nkledger-lock',
        format_version: 2,
        materials: { sio2: { version: 1 }, ta2o5: { version: 1 } },
      });
      expect(JSON.parse(text).registry_head).toEqual(await chainHead(t.registry));
      const report = await lockVerify(t.registry, parseLockfile(text));
      expect(report).toMatchObject({ ok: true, failures: 0, warnings: 0, history: { outcome: 'ok', failed: false } });
      expect(report.entries.map((e) => e.outcome)).toEqual(['ok', 'ok']);
    });

    it('refuses malformed lockfiles with the place named', () => {
      expect(() => parseLockfile('{', 'x.json')).toThrow(InputError);
      expect(() => parseLockfile(JSON.stringify({ format: 'nkledger-lock', format_version: 3, materials: {} }))).toThrow(/format_version/);
      expect(() => parseLockfile(JSON.stringify({ ...lock, registry_head: { hash: 'abc', sequence: 1 } }))).toThrow(/registry_head\.hash/);
      expect(() => parseLockfile(JSON.stringify({ ...lock, format_version: 1 }))).toThrow(/only in format_version 2/);
      expect(() => parseLockfile(JSON.stringify({ ...lock, materials: { sio2: { version: 1, sha256: 'abc' } } }))).toThrow(/materials\.sio2\.sha256/);
    });

    it('catches a changed hash, a missing material and a missing version', async () => {
      const bad: Lockfile = {
        ...lock,
        materials: {
          ...lock.materials,
          sio2: { ...lock.materials.sio2, sha256: lock.materials.ta2o5.sha256 },
          'ghost-film': { version: 1, sha256: '0'.repeat(64) },
          ta2o5: { version: 4, sha256: lock.materials.ta2o5.sha256 },
        },
      };
      const report = await lockVerify(t.registry, bad);
      expect(report.ok).toBe(false);
      expect(report.failures).toBe(3);
      const byRef = Object.fromEntries(report.entries.map((e) => [e.ref, e]));
      expect(byRef['sio2@1']).toMatchObject({ outcome: 'mismatch', failed: true });
      expect(byRef['ghost-film@1']).toMatchObject({ outcome: 'missing', failed: true });
      expect(byRef['ghost-film@1'].message).toMatch(/no material "ghost-film"/);
      expect(byRef['ta2o5@4']).toMatchObject({ outcome: 'missing', failed: true });
    });

    it('still reads a format 1 lockfile: entries checked, history not (a warning); lock add upgrades it to format 2', async () => {
      const v1 = JSON.stringify({ format: 'nkledger-lock', format_version: 1, materials: lock.materials });
      const report = await lockVerify(t.registry, parseLockfile(v1));
      expect(report).toMatchObject({ ok: true, failures: 0, warnings: 1, history: { outcome: 'not-recorded', failed: false } });
      const upgraded = (await lockAdd(t.registry, parseLockfile(v1), 'sio2@1')).lock;
      expect(JSON.parse(serializeLockfile(upgraded))).toMatchObject({ format_version: 2, registry_head: await chainHead(t.registry) });
    });

    it('recomputes each pinned hash from the content: content edited under an unchanged hash column fails (issue attack 1)', async () => {
      // Drop the content trigger, change the pinned version's content, re-create the trigger: the sha256
      // column still holds the locked value, which is all the earlier check compared.
      const [row] = await rawSql<{ id: number; content: string }>(t.registry, 'SELECT id, content FROM material_versions WHERE id = 1');
      const content = JSON.parse(row.content);
      content.table.n[2] += 0.002;
      await withTriggerLifted(t.registry, 'material_versions_content_immutable', 'UPDATE material_versions SET content = ? WHERE id = 1', [
        canonicalJson(content),
      ]);
      const report = await lockVerify(t.registry, lock);
      expect(report.ok).toBe(false);
      const sio2 = report.entries.find((e) => e.slug === 'sio2')!;
      expect(sio2).toMatchObject({ outcome: 'mismatch', failed: true });
      expect(sio2.registry_sha256).not.toBe(lock.materials.sio2.sha256);
      expect(sio2.message).toMatch(/stored hash column still says the locked value/);
    });

    it('proves the history still contains the locked head: appended history passes, a rewritten chain fails', async () => {
      // Appending is fine: more events after the locked head.
      await importVersion(t.registry, { slug: 'sio2', table: cauchyTable(1.48) }, 'ada');
      await approve(t.registry, 'sio2@2', 'bob');
      expect((await lockVerify(t.registry, lock)).history).toMatchObject({ outcome: 'ok', failed: false });
      // Another registry with the same pins but its own history is not the one the lockfile was made against.
      const other = await tempRegistry(backend);
      try {
        for (const slug of ['sio2', 'ta2o5']) {
          await createMaterial(other.registry, { slug, name: slug }, 'ada');
          await importVersion(other.registry, { slug, table: cauchyTable(slug === 'sio2' ? 1.45 : 2.1) }, 'ada');
          await approve(other.registry, `${slug}@1`, 'bob');
        }
        const report = await lockVerify(other.registry, lock);
        expect(report.entries.map((e) => e.outcome)).toEqual(['ok', 'ok']);
        expect(report.history).toMatchObject({ outcome: 'rewritten', failed: true });
        expect(report.ok).toBe(false);
      } finally {
        await other.cleanup();
      }
    });

    it('warns on a retired version, and fails it with strict', async () => {
      await retire(t.registry, 'sio2@1', 'bad substrate model', 'bob');
      const relaxed = await lockVerify(t.registry, lock);
      expect(relaxed).toMatchObject({ ok: true, warnings: 1, failures: 0 });
      expect(relaxed.entries[0]).toMatchObject({ ref: 'sio2@1', outcome: 'retired', failed: false });
      expect(relaxed.entries[0].message).toMatch(/bad substrate model/);
      expect(await lockVerify(t.registry, lock, { strict: true })).toMatchObject({ ok: false, failures: 1 });
    });

    it('refuses to pin a withdrawn draft, replaces an older pin, and lists newer approved versions', async () => {
      await importVersion(t.registry, { slug: 'sio2', table: cauchyTable(1.46) }, 'ada');
      await importVersion(t.registry, { slug: 'sio2', table: cauchyTable(1.47) }, 'ada');
      await approve(t.registry, 'sio2@2', 'bob');
      await withdraw(t.registry, 'sio2@3', 'ada');
      await expect(lockAdd(t.registry, lock, 'sio2@3')).rejects.toThrow(/withdrawn/);
      expect(await lockOutdated(t.registry, lock)).toEqual([
        { ref: 'sio2@1', slug: 'sio2', locked_version: 1, newer_approved: [2], latest_approved: 2 },
      ]);
      const updated = await lockAdd(t.registry, lock, 'sio2');
      expect(updated.replaced?.version).toBe(1);
      expect(updated.notices.join()).toMatch(/replaced sio2@1 with sio2@2/);
      expect(await lockOutdated(t.registry, updated.lock)).toEqual([]);
      expect(lock.materials.sio2.version).toBe(1);
    });
  });
});
