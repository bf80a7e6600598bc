import { afterEach, beforeEach, describe, expect, it } from 'vitest';
import { ConflictError, InputError, NotFoundError } from '../../src/errors.ts';
import {
  approve,
  createMaterial,
  history,
  importVersion,
  listMaterials,
  openRegistry,
  readSettings,
  resolveRef,
  retire,
  showVersion,
  versionSha256,
  withdraw,
  writeSettingText,
} from '../../src/service/registry.ts';
import { BACKENDS, cauchyTable, rawSql, tempRegistry, type TempRegistry } from './helpers.ts';

describe.each(BACKENDS)('registry core on %s', (backend) => {
  let t: TempRegistry;
  beforeEach(async () => {
    t = await tempRegistry(backend);
    await createMaterial(t.registry, { slug: 'sio2-thermal', name: 'Thermal oxide', tags: ['oxide', 'demo'] }, 'ada');
  });
  afterEach(() => t.cleanup());

  // SQLite internals (pragmas, drizzle's migration table in the file): SQLite only.
  describe.skipIf(backend !== 'sqlite')('opening (SQLite file settings)', () => {
    it('applies migrations idempotently and sets WAL, foreign keys and a busy timeout', async () => {
      const again = await openRegistry(t.path);
      try {
        expect(again.sqlite.pragma('journal_mode', { simple: true })).toBe('wal');
        expect(again.sqlite.pragma('foreign_keys', { simple: true })).toBe(1);
        expect(again.sqlite.pragma('busy_timeout', { simple: true })).toBe(5000);
        const applied = again.sqlite.prepare('SELECT count(*) AS n FROM __drizzle_migrations').get() as { n: number };
        expect(applied.n).toBeGreaterThanOrEqual(2);
        expect((await listMaterials(again)).map((m) => m.slug)).toEqual(['sio2-thermal']);
      } finally {
        await again.close();
      }
    });
  });

  describe('materials', () => {
    it('creates, lists and refuses a taken or malformed slug', async () => {
      const [m] = await listMaterials(t.registry);
      expect(m).toMatchObject({
        slug: 'sio2-thermal',
        name: 'Thermal oxide',
        tags: ['demo', 'oxide'],
        created_by: 'ada',
        versions: 0,
        latest_approved: null,
      });
      await expect(createMaterial(t.registry, { slug: 'sio2-thermal', name: 'x' }, 'ada')).rejects.toThrow(ConflictError);
      for (const bad of ['SiO2', 'sio2_thermal', '-sio2', 'sio2-', 'a--b', '']) {
        await expect(createMaterial(t.registry, { slug: bad, name: 'x' }, 'ada')).rejects.toThrow(InputError);
      }
      expect(await listMaterials(t.registry, { tag: 'oxide' })).toHaveLength(1);
      expect(await listMaterials(t.registry, { tag: 'nitride' })).toHaveLength(0);
    });
  });

  describe('versions', () => {
    it('numbers versions 1, 2, 3 and stores a reproducible hash', async () => {
      const v1 = await importVersion(
        t.registry,
        { slug: 'sio2-thermal', table: cauchyTable(), provenance: { instrument: 'SE-1', method: 'se', angles_deg: '65,70,75' } },
        'ada',
      );
      const v2 = await importVersion(t.registry, { slug: 'sio2-thermal', table: cauchyTable(1.46) }, 'ada');
      expect([v1.ref, v2.ref]).toEqual(['sio2-thermal@1', 'sio2-thermal@2']);
      expect(v1.status).toBe('draft');
      const shown = await showVersion(t.registry, 'sio2-thermal@1');
      expect(shown.provenance).toMatchObject({ instrument: 'SE-1', method: 'spectroscopic-ellipsometry', angles_deg: [65, 70, 75] });
      expect(shown.content.table?.n).toEqual(cauchyTable().n);
      expect(versionSha256(shown.content, shown.provenance)).toBe(v1.sha256);
      expect(v1.sha256).toMatch(/^[0-9a-f]{64}$/);
    });

    it('refuses identical content unless the twin was withdrawn, and empty content', async () => {
      await importVersion(t.registry, { slug: 'sio2-thermal', table: cauchyTable() }, 'ada');
      await expect(importVersion(t.registry, { slug: 'sio2-thermal', table: cauchyTable() }, 'ada')).rejects.toThrow(
        /already stored as sio2-thermal@1/,
      );
      await withdraw(t.registry, 'sio2-thermal@1', 'ada', 'typo in recipe');
      expect((await importVersion(t.registry, { slug: 'sio2-thermal', table: cauchyTable() }, 'ada')).ref).toBe('sio2-thermal@2');
      await expect(importVersion(t.registry, { slug: 'sio2-thermal' }, 'ada')).rejects.toThrow(/needs a table or a fitted model/);
      await expect(importVersion(t.registry, { slug: 'nope', table: cauchyTable() }, 'ada')).rejects.toThrow(NotFoundError);
    });

    it('refuses bad provenance with the field named', async () => {
      const bad = (provenance: Record<string, unknown>) =>
        importVersion(t.registry, { slug: 'sio2-thermal', table: cauchyTable(), provenance }, 'ada');
      await expect(bad({ method: 'guesswork' })).rejects.toThrow(/method/);
      await expect(bad({ measured_on: '2024-02-30' })).rejects.toThrow(/measured_on/);
      await expect(bad({ angles_deg: '65,95' })).rejects.toThrow(/angles_deg/);
      await expect(bad({ colour: 'blue' })).rejects.toThrow(/unknown provenance field "colour"/);
    });
  });

  describe('references', () => {
    it('resolves slug@N, slug@sha256:PREFIX and a bare slug with a not-a-pin notice', async () => {
      const v1 = await importVersion(t.registry, { slug: 'sio2-thermal', table: cauchyTable() }, 'ada');
      await importVersion(t.registry, { slug: 'sio2-thermal', table: cauchyTable(1.47) }, 'ada');
      await expect(resolveRef(t.registry, 'sio2-thermal')).rejects.toThrow(/no approved version/);
      await approve(t.registry, 'sio2-thermal@1', 'bob');
      const bare = await resolveRef(t.registry, 'sio2-thermal');
      expect(bare.ref).toBe('sio2-thermal@1');
      expect(bare.notices[0]).toMatch(/not a pin/);
      expect((await resolveRef(t.registry, `sio2-thermal@sha256:${v1.sha256.slice(0, 8)}`)).ref).toBe('sio2-thermal@1');
      expect((await resolveRef(t.registry, `sio2-thermal@sha256:${v1.sha256.toUpperCase()}`)).ref).toBe('sio2-thermal@1');
      await expect(resolveRef(t.registry, 'sio2-thermal@sha256:abc')).rejects.toThrow(/8 to 64 hex digits/);
      await expect(resolveRef(t.registry, 'sio2-thermal@sha256:00000000')).rejects.toThrow(NotFoundError);
      await expect(resolveRef(t.registry, 'sio2-thermal@7')).rejects.toThrow(/no version 7/);
      await expect(resolveRef(t.registry, 'sio2-thermal@latest')).rejects.toThrow(/not a reference/);
      expect((await resolveRef(t.registry, 'sio2-thermal@2')).warnings[0]).toMatch(/draft/);
    });

    it('calls a hash prefix shared by two versions ambiguous', async () => {
      // Two real hashes sharing 8 hex digits would take ~2^16 imports; raw INSERTs are allowed (only UPDATE and
      // DELETE are refused), so plant a second row whose hash shares the first 10 digits.
      const v1 = await importVersion(t.registry, { slug: 'sio2-thermal', table: cauchyTable() }, 'ada');
      const [m] = await rawSql<{ id: number }>(t.registry, "SELECT id FROM materials WHERE slug = 'sio2-thermal'");
      const twinHash = `${v1.sha256.slice(0, 10)}${'0'.repeat(54)}`;
      await rawSql(
        t.registry,
        "INSERT INTO material_versions (material_id, number, status, content, sha256, created_by, created_at) VALUES (?, 2, 'draft', '{}', ?, 'eve', 'now')",
        [m.id, twinHash],
      );
      await expect(resolveRef(t.registry, `sio2-thermal@sha256:${v1.sha256.slice(0, 8)}`)).rejects.toThrow(
        /ambiguous.*sio2-thermal@2, sio2-thermal@1/,
      );
      expect((await resolveRef(t.registry, `sio2-thermal@sha256:${v1.sha256.slice(0, 12)}`)).ref).toBe('sio2-thermal@1');
    });
  });

  describe('lifecycle and the two-person rule', () => {
    it('refuses approval by the creator, allows it under the setting and records it', async () => {
      await importVersion(t.registry, { slug: 'sio2-thermal', table: cauchyTable() }, 'ada');
      await expect(approve(t.registry, 'sio2-thermal@1', 'ada')).rejects.toThrow(ConflictError);
      await expect(approve(t.registry, 'sio2-thermal@1', ' ada ')).rejects.toThrow(/cannot also approve/);
      expect((await readSettings(t.registry)).allow_self_approval).toBe(false);
      await writeSettingText(t.registry, 'allow_self_approval', 'on', 'ada');
      const v = await approve(t.registry, 'sio2-thermal@1', 'ada');
      expect(v).toMatchObject({ status: 'approved', approved_by: 'ada', self_approved: true });
      const h = await history(t.registry, 'sio2-thermal');
      expect(h.audit.map((a) => a.action)).toEqual(['material.create', 'version.import', 'version.approve']);
      expect(h.audit[2]).toMatchObject({ actor: 'ada', ref: 'sio2-thermal@1', detail: { self_approved: true } });
    });

    it('approves by another person, retires with a reason, withdraws only drafts', async () => {
      await importVersion(t.registry, { slug: 'sio2-thermal', table: cauchyTable() }, 'ada');
      await importVersion(t.registry, { slug: 'sio2-thermal', table: cauchyTable(1.47) }, 'ada');
      expect(await approve(t.registry, 'sio2-thermal@1', 'bob')).toMatchObject({ status: 'approved', approved_by: 'bob', self_approved: false });
      await expect(approve(t.registry, 'sio2-thermal@1', 'cy')).rejects.toThrow(/it is approved/);
      await expect(withdraw(t.registry, 'sio2-thermal@1', 'bob')).rejects.toThrow(ConflictError);
      await expect(retire(t.registry, 'sio2-thermal@1', '  ', 'bob')).rejects.toThrow(/say why you retire it/);
      await expect(retire(t.registry, 'sio2-thermal@2', 'bad', 'bob')).rejects.toThrow(/it is draft, and only an approved version can be retired/);
      const r = await retire(t.registry, 'sio2-thermal@1', 'substrate model was wrong', 'bob');
      expect(r).toMatchObject({ status: 'retired', retired_by: 'bob', retire_reason: 'substrate model was wrong' });
      const shown = await showVersion(t.registry, 'sio2-thermal@1');
      expect(shown.warnings[0]).toMatch(/retired .*substrate model was wrong/);
      await expect(resolveRef(t.registry, 'sio2-thermal')).rejects.toThrow(/no approved version/);
      expect((await withdraw(t.registry, 'sio2-thermal@2', 'ada')).status).toBe('withdrawn');
      await expect(approve(t.registry, 'sio2-thermal@2', 'bob')).rejects.toThrow(/it is withdrawn/);
    });
  });
});
