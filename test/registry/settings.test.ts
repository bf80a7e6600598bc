/**
 * One settings catalogue and one table (registry_settings) for the registry's rules and the HTTP API's settings;
 * every change is audited; a registry made before the merge keeps its values (migrations 0003 and 0004).
 */
import { mkdtempSync, rmSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { afterEach, beforeEach, describe, expect, it } from 'vitest';
import {
  approve,
  createMaterial,
  importVersion,
  openRegistry,
  readSettings,
  resetSetting,
  SETTING_KEYS,
  writeSetting,
  writeSettingText,
} from '../../src/service/registry.ts';
import { BACKENDS, rawSql, cauchyTable, databaseAtMigration, tempRegistry, type TempRegistry } from './helpers.ts';

describe.each(BACKENDS)('settings on %s', (backend) => {
  let t: TempRegistry;
  beforeEach(async () => {
    t = await tempRegistry(backend);
  });
  afterEach(() => t.cleanup());

  const auditRows = (t: TempRegistry) =>
    rawSql<{ actor: string; action: string; detail: string }>(
      t.registry,
      "SELECT actor, action, detail FROM audit_log WHERE action LIKE 'setting.%' ORDER BY id",
    );

  describe('settings', () => {
    it('one catalogue holds the registry rule and the API settings, with defaults', async () => {
      expect(SETTING_KEYS).toEqual([
        'allow_self_approval',
        'anonymous_reads',
        'cors_origins',
        'max_body_bytes',
        'max_nk_points',
        'max_stack_work',
        'token_lifetime',
        'writes',
      ]);
      expect(await readSettings(t.registry)).toEqual({
        allow_self_approval: false,
        anonymous_reads: 'auto',
        cors_origins: [],
        max_body_bytes: 8 * 1024 * 1024,
        max_nk_points: 10_000,
        max_stack_work: 2_000_000,
        token_lifetime: '90d',
        writes: 'any',
      });
    });

    it('allow_self_approval set through the catalogue governs approval; set and reset are audited', async () => {
      await createMaterial(t.registry, { slug: 'sio2-thermal', name: 'Thermal oxide' }, 'ada');
      await importVersion(t.registry, { slug: 'sio2-thermal', table: cauchyTable() }, 'ada');
      await expect(approve(t.registry, 'sio2-thermal@1', 'ada')).rejects.toThrow(/may allow self-approval: setting allow_self_approval/);
      expect((await writeSettingText(t.registry, 'allow_self_approval', 'on', 'ada')).allow_self_approval).toBe(true);
      expect(await approve(t.registry, 'sio2-thermal@1', 'ada')).toMatchObject({ self_approved: true });
      expect((await resetSetting(t.registry, 'allow_self_approval', 'ada')).allow_self_approval).toBe(false);
      await writeSetting(t.registry, 'max_nk_points', 500, 'root');
      expect(await auditRows(t)).toEqual([
        { actor: 'ada', action: 'setting.set', detail: JSON.stringify({ key: 'allow_self_approval', value: true }) },
        { actor: 'ada', action: 'setting.reset', detail: JSON.stringify({ key: 'allow_self_approval' }) },
        { actor: 'root', action: 'setting.set', detail: JSON.stringify({ key: 'max_nk_points', value: 500 }) },
      ]);
      // Stored once: one table, one row per key that is set.
      expect(await rawSql(t.registry, 'SELECT key FROM registry_settings ORDER BY key')).toEqual([{ key: 'max_nk_points' }]);
      if (backend === 'sqlite') expect(t.registry.sqlite.prepare("SELECT name FROM sqlite_master WHERE name = 'api_settings'").all()).toEqual([]);
      else expect(await rawSql(t.registry, "SELECT to_regclass('api_settings') IS NULL AS gone")).toEqual([{ gone: true }]);
    });

    it('refuses values that do not fit, names the setting, and writes nothing', async () => {
      await expect(writeSettingText(t.registry, 'allow_self_approval', 'maybe', 'ada')).rejects.toThrow(
        /bad value for setting allow_self_approval: say on or off/,
      );
      await expect(writeSetting(t.registry, 'allow_self_approval', 'on', 'ada')).rejects.toThrow(/allow_self_approval/); // JSON API: a boolean
      await expect(writeSettingText(t.registry, 'self_approval', 'on', 'ada')).rejects.toThrow(
        /unknown setting "self_approval": known settings are allow_self_approval, /,
      );
      expect(await auditRows(t)).toEqual([]);
    });
  });
});

// An SQLite file from an older nkledger: SQLite only (PostgreSQL registries start at the merged schema).
describe('migration of a registry made before the settings were merged', () => {
  let dir: string;
  beforeEach(() => {
    dir = mkdtempSync(join(tmpdir(), 'nkledger-settings-mig-'));
  });
  afterEach(() => rmSync(dir, { recursive: true, force: true }));

  it('carries the values of both old tables into registry_settings', async () => {
    // Only the migrations up to 0002 (the two-table layout).
    const path = join(dir, 'old.db');
    const sqlite = databaseAtMigration(dir, 'old.db', 2);
    sqlite
      .prepare(
        "INSERT INTO registry_settings (key, value, updated_by, updated_at) VALUES ('allow_self_approval', 'true', 'ada', '2025-01-01T00:00:00.000Z')",
      )
      .run();
    sqlite
      .prepare(
        "INSERT INTO api_settings (key, value_json, updated_at, updated_by) VALUES ('cors_origins', '[\"https://design.example.org\"]', '2025-01-02T00:00:00.000Z', 'root')",
      )
      .run();
    sqlite
      .prepare(
        "INSERT INTO api_settings (key, value_json, updated_at, updated_by) VALUES ('anonymous_reads', '\"off\"', '2025-01-02T00:00:00.000Z', 'root')",
      )
      .run();
    sqlite.close();

    const registry = await openRegistry(path);
    try {
      expect(await readSettings(registry)).toMatchObject({
        allow_self_approval: true,
        cors_origins: ['https://design.example.org'],
        anonymous_reads: 'off',
        max_nk_points: 10_000,
      });
      expect(registry.sqlite.prepare('SELECT key, updated_by FROM registry_settings ORDER BY key').all()).toEqual([
        { key: 'allow_self_approval', updated_by: 'ada' },
        { key: 'anonymous_reads', updated_by: 'root' },
        { key: 'cors_origins', updated_by: 'root' },
      ]);
      expect(registry.sqlite.prepare("SELECT name FROM sqlite_master WHERE name = 'api_settings'").all()).toEqual([]);
    } finally {
      await registry.close();
    }
  });
});
