import { afterEach, beforeEach, describe, expect, it } from 'vitest';
import { approve, createMaterial, importVersion, retire, showVersion, verifyRegistry, withdraw } from '../../src/service/registry.ts';
import { BACKENDS, cauchyTable, dropTrigger, rawSql, tempRegistry, withoutForeignKeys, type TempRegistry } from './helpers.ts';

describe.each(BACKENDS)('immutability on %s', (backend) => {
  let t: TempRegistry;
  let sha: string;
  beforeEach(async () => {
    t = await tempRegistry(backend);
    await createMaterial(t.registry, { slug: 'mgf2', name: 'MgF2' }, 'ada');
    sha = (await importVersion(t.registry, { slug: 'mgf2', table: cauchyTable(1.38, 0.002), provenance: { instrument: 'SE-1' } }, 'ada')).sha256;
    await approve(t.registry, 'mgf2@1', 'bob');
  });
  afterEach(() => t.cleanup());

  const sql = (s: string) => rawSql(t.registry, s);

  describe('an approved version cannot change', () => {
    it('through the service: no second approval, no withdrawal, identical re-import refused', async () => {
      await expect(approve(t.registry, 'mgf2@1', 'cy')).rejects.toThrow(/it is approved/);
      await expect(withdraw(t.registry, 'mgf2@1', 'cy')).rejects.toThrow(/it is approved/);
      await expect(
        importVersion(t.registry, { slug: 'mgf2', table: cauchyTable(1.38, 0.002), provenance: { instrument: 'SE-1' } }, 'ada'),
      ).rejects.toThrow(/already stored as mgf2@1/);
      // a correction is a new version; version 1 is untouched
      await importVersion(t.registry, { slug: 'mgf2', table: cauchyTable(1.381, 0.002) }, 'ada');
      expect((await showVersion(t.registry, 'mgf2@1')).sha256).toBe(sha);
    });

    it('through raw SQL: the triggers abort updates of content, hash, provenance, number and deletes', async () => {
      await expect(sql("UPDATE material_versions SET content = '{}' WHERE number = 1")).rejects.toThrow(/immutable/);
      await expect(sql("UPDATE material_versions SET sha256 = 'x' WHERE number = 1")).rejects.toThrow(/immutable/);
      await expect(sql("UPDATE material_versions SET instrument = 'other' WHERE number = 1")).rejects.toThrow(/immutable/);
      await expect(sql('UPDATE material_versions SET number = 9 WHERE number = 1')).rejects.toThrow(/immutable/);
      await expect(sql("UPDATE material_versions SET created_by = 'eve'")).rejects.toThrow(/immutable/);
      await expect(sql("UPDATE material_versions SET approved_by = 'eve'")).rejects.toThrow(/written once/);
      await expect(sql("UPDATE material_versions SET status = 'draft'")).rejects.toThrow(/status may only go/);
      await expect(sql('DELETE FROM material_versions')).rejects.toThrow(/never deleted/);
      await expect(sql('DELETE FROM materials')).rejects.toThrow(/never deleted/);
      await expect(sql("UPDATE materials SET slug = 'mgf3'")).rejects.toThrow(/never change/);
      await expect(sql('UPDATE materials SET last_version = 0')).rejects.toThrow(/never reused/);
      await expect(sql("UPDATE audit_log SET actor = 'eve'")).rejects.toThrow(/append-only/);
      await expect(sql('DELETE FROM audit_log')).rejects.toThrow(/append-only/);
      expect((await verifyRegistry(t.registry)).ok).toBe(true);
      expect(await showVersion(t.registry, 'mgf2@1')).toMatchObject({ sha256: sha, status: 'approved', approved_by: 'bob' });
    });

    it('still allows the legal transitions in SQL terms (approved → retired)', async () => {
      expect((await retire(t.registry, 'mgf2@1', 'superseded', 'bob')).status).toBe('retired');
      await expect(sql("UPDATE material_versions SET retire_reason = 'other'")).rejects.toThrow(/written once/);
      await expect(sql("UPDATE material_versions SET status = 'approved'")).rejects.toThrow(/status may only go/);
    });
  });

  describe('verify catches tampering done with the triggers dropped', () => {
    it('names the edited version, a deleted version and the dropped triggers', async () => {
      await importVersion(t.registry, { slug: 'mgf2', table: cauchyTable(1.39, 0.002) }, 'ada');
      await importVersion(t.registry, { slug: 'mgf2', table: cauchyTable(1.4, 0.002) }, 'ada');
      expect(await verifyRegistry(t.registry)).toMatchObject({ ok: true, checked_versions: 3 });
      await dropTrigger(t.registry, 'material_versions_content_immutable');
      await dropTrigger(t.registry, 'material_versions_no_delete');
      // change one n value in the stored content of version 1, and the provenance of version 2
      const [row] = await rawSql<{ content: string }>(t.registry, 'SELECT content FROM material_versions WHERE number = 1');
      const content = JSON.parse(row.content);
      content.table.n[3] += 0.001;
      await rawSql(t.registry, 'UPDATE material_versions SET content = ? WHERE number = 1', [JSON.stringify(content)]);
      await rawSql(t.registry, "UPDATE material_versions SET operator = 'eve' WHERE number = 2");
      // the audit row still points at it
      await withoutForeignKeys(t.registry, 'DELETE FROM material_versions WHERE number = 3');
      const report = await verifyRegistry(t.registry);
      expect(report.ok).toBe(false);
      expect(report.checked_versions).toBe(2);
      expect(report.mismatches.map((m) => m.ref)).toEqual(['mgf2@1', 'mgf2@2']);
      expect(report.mismatches[0]).toMatchObject({ stored_sha256: sha });
      expect(report.mismatches[0].computed_sha256).not.toBe(sha);
      expect(report.missing_versions).toEqual(['mgf2@3']);
      expect(report.missing_triggers).toEqual(['material_versions_content_immutable', 'material_versions_no_delete']);
    });

    it('reports unreadable content instead of failing', async () => {
      await dropTrigger(t.registry, 'material_versions_content_immutable');
      await rawSql(t.registry, "UPDATE material_versions SET content = '{not json' WHERE number = 1");
      expect((await verifyRegistry(t.registry)).mismatches).toEqual([
        { ref: 'mgf2@1', stored_sha256: sha, computed_sha256: null, reason: 'stored content is not valid JSON' },
      ]);
    });
  });
});
