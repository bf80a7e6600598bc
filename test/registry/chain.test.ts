/**
 * The audit hash chain and what `verify` proves with it. Each attack from the tamper report is made with
 * raw SQL on the file, as another program would, and must make verify fail with the version named:
 * content and hash rewritten together, a status set to approved with another approver and no audit row,
 * an immutability trigger replaced by a same-named no-op, and edits of the audit log itself.
 * (Hash chaining of log entries: S. Haber and W. S. Stornetta, J. Cryptology 3, 99 (1991).)
 */
import Database from 'better-sqlite3';
import { mkdtempSync, rmSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { afterEach, beforeEach, describe, expect, it } from 'vitest';
import { chainHead, eventDocument, GENESIS_TYPE, readAuditRows, type AuditRow } from '../../src/registry/chain.ts';
import {
  approve,
  canonicalJson,
  createMaterial,
  importVersion,
  openRegistry,
  retire,
  sha256Hex,
  verifyRegistry,
  versionSha256,
} from '../../src/service/registry.ts';
import { BACKENDS, cauchyTable, dropTrigger, NO_PROVENANCE, rawSql, registryFileBeforeTheChain, tempRegistry, type TempRegistry } from './helpers.ts';

let t: TempRegistry;
beforeEach(async () => {
  t = await tempRegistry();
  await createMaterial(t.registry, { slug: 'film', name: 'Film' }, 'ada');
  await importVersion(t.registry, { slug: 'film', table: cauchyTable(1.45) }, 'ada');
  await importVersion(t.registry, { slug: 'film', table: cauchyTable(1.46) }, 'ada');
  await approve(t.registry, 'film@1', 'bob');
});
afterEach(() => t.cleanup());

/** Another program's connection to the same file (no nkledger code in the way). */
function raw(use: (db: Database.Database) => void): void {
  const db = new Database(t.path);
  try {
    use(db);
  } finally {
    db.close();
  }
}

const triggerSql = (db: Database.Database, name: string) =>
  (db.prepare('SELECT sql FROM sqlite_master WHERE name = ?').get(name) as { sql: string }).sql;

describe('the audit chain', () => {
  it('links every event to the one before it and hashes each over its canonical JSON', async () => {
    const rows = await readAuditRows(t.registry);
    expect(rows.map((r) => r.action)).toEqual([GENESIS_TYPE, 'material.create', 'version.import', 'version.import', 'version.approve']);
    expect(rows[0].prev_hash).toBeNull();
    for (let i = 1; i < rows.length; i++) expect(rows[i].prev_hash).toBe(rows[i - 1].hash);
    // The hashed document, byte for byte: keys sorted, every key present, integers only.
    const approveRow = rows[4];
    const text = canonicalJson(eventDocument(approveRow));
    expect(text).toBe(
      `{"actor":"bob","content_sha256":"${approveRow.content_sha256}","details":{"ref":"film@1","self_approved":false,"sha256":"${approveRow.content_sha256}"},` +
        `"material":"film","prev_hash":"${rows[3].hash}","status_change":{"from":"draft","to":"approved"},"time":"${approveRow.at}","type":"version.approve","version":1}`,
    );
    expect(approveRow.hash).toBe(sha256Hex(text));
    expect(await chainHead(t.registry)).toEqual({ hash: approveRow.hash, sequence: 5 });
    const report = await verifyRegistry(t.registry);
    expect(report.ok).toBe(true);
    expect(report.chain).toEqual({ head: { hash: approveRow.hash, sequence: 5 }, problems: [] });
  });

  it('refuses, in SQLite itself, an audit row that does not extend the chain at its head', async () => {
    const first = (await readAuditRows(t.registry))[1];
    raw((db) => {
      expect(() =>
        db.exec("INSERT INTO audit_log (at, actor, action, detail) VALUES ('2025-01-01T00:00:00.000Z', 'mallory', 'version.approve', '{}')"),
      ).toThrow(/extend the chain/);
      expect(() =>
        db
          .prepare(
            "INSERT INTO audit_log (at, actor, action, detail, prev_hash, hash) VALUES ('2025-01-01T00:00:00.000Z', 'mallory', 'x', '{}', ?, ?)",
          )
          .run(first.prev_hash, 'e'.repeat(64)),
      ).toThrow(/extend the chain|UNIQUE/);
    });
  });
});

describe('verify catches each attack made with raw SQL', () => {
  it('content and its hash rewritten together (triggers dropped and re-created)', async () => {
    raw((db) => {
      const trigger = triggerSql(db, 'material_versions_content_immutable');
      db.exec('DROP TRIGGER material_versions_content_immutable');
      const row = db.prepare('SELECT * FROM material_versions WHERE number = 1').get() as Record<string, string>;
      const content = JSON.parse(row.content);
      content.table.n[0] += 0.01;
      const provenance = { ...NO_PROVENANCE };
      db.prepare('UPDATE material_versions SET content = ?, sha256 = ? WHERE number = 1').run(
        canonicalJson(content),
        versionSha256(content, provenance),
      );
      db.exec(trigger);
    });
    const report = await verifyRegistry(t.registry);
    expect(report.ok).toBe(false);
    expect(report.mismatches).toEqual([]); // content and column agree: only the chain can tell
    expect(report.state_mismatches.map((m) => m.problem)).toEqual([
      expect.stringMatching(/^film@1: its content hashes to .* but the audit chain recorded .*content rewritten/),
    ]);
  });

  it('a draft set to approved with another user as approver, without an audit row', async () => {
    raw((db) =>
      db.exec(
        "UPDATE material_versions SET status = 'approved', approved_by = 'carol', approved_at = '2025-01-01T00:00:00.000Z', self_approved = 0 WHERE number = 2",
      ),
    );
    const report = await verifyRegistry(t.registry);
    expect(report.ok).toBe(false);
    expect(report.state_mismatches.map((m) => m.problem)).toEqual([
      'film@2: it is approved, but the audit chain has it draft (status changed outside nkledger)',
      'film@2: it says approved by carol, but the audit chain says nobody',
    ]);
  });

  it('an approver rewritten on an approved version', async () => {
    raw((db) => {
      db.exec('DROP TRIGGER material_versions_lifecycle_set_once');
      db.exec("UPDATE material_versions SET approved_by = 'ada' WHERE number = 1");
    });
    const report = await verifyRegistry(t.registry);
    expect(report.state_mismatches.map((m) => m.problem)).toEqual(['film@1: it says approved by ada, but the audit chain says bob']);
    expect(report.missing_triggers).toEqual(['material_versions_lifecycle_set_once']);
  });

  it('a trigger replaced by a same-named one that never fires (WHEN 0), and a trigger nobody created', async () => {
    raw((db) => {
      db.exec('DROP TRIGGER material_versions_status_transitions');
      db.exec(
        "CREATE TRIGGER material_versions_status_transitions BEFORE UPDATE OF status ON material_versions WHEN 0 BEGIN SELECT RAISE(ABORT, 'nkledger: status may only go draft -> approved -> retired, or draft -> withdrawn'); END",
      );
      db.exec('CREATE TRIGGER helper AFTER INSERT ON materials BEGIN SELECT 1; END');
    });
    const report = await verifyRegistry(t.registry);
    expect(report.ok).toBe(false);
    expect(report.missing_triggers).toEqual([]);
    expect(report.altered_triggers).toEqual(['material_versions_status_transitions']);
    expect(report.unexpected_triggers).toEqual(['helper']);
  });

  it('an audit event edited, or deleted, with the log triggers dropped', async () => {
    raw((db) => {
      db.exec('DROP TRIGGER audit_log_no_update');
      db.exec("UPDATE audit_log SET actor = 'carol' WHERE action = 'version.approve'");
    });
    expect((await verifyRegistry(t.registry)).chain.problems).toEqual([
      expect.stringMatching(/audit event 5 \(version\.approve, sequence 5\): its content no longer matches its hash/),
    ]);
    // The approver's name in the versions table now disagrees with the (edited) event too.
    raw((db) => {
      db.exec('DROP TRIGGER audit_log_no_delete');
      db.exec("DELETE FROM audit_log WHERE action = 'version.import' AND version_number = 2");
    });
    const report = await verifyRegistry(t.registry);
    expect(report.chain.problems.join('\n')).toMatch(/sequence 4\): its prev_hash does not name the event before it/);
    expect(report.state_mismatches.map((m) => m.problem)).toContain(
      'film@2: the audit chain never recorded this version (inserted outside nkledger)',
    );
  });

  it('the whole log emptied', async () => {
    raw((db) => {
      db.exec('DROP TRIGGER audit_log_no_delete');
      db.exec('DELETE FROM audit_log');
    });
    const report = await verifyRegistry(t.registry);
    expect(report.chain.problems).toEqual(['the audit log has no hash chain (no chain.genesis event)']);
    expect(report.ok).toBe(false);
  });

  it('retire and the lifecycle after it stay consistent with the chain', async () => {
    await retire(t.registry, 'film@1', 'substrate mix-up', 'bob');
    expect((await verifyRegistry(t.registry)).ok).toBe(true);
  });
});

describe('a registry written before the chain existed', () => {
  let dir: string;
  beforeEach(() => {
    dir = mkdtempSync(join(tmpdir(), 'nkledger-genesis-'));
  });
  afterEach(() => rmSync(dir, { recursive: true, force: true }));

  /** A registry file at the schema of migration 0005 (before the chain), with one approved version and its log. */
  function oldRegistry(): string {
    return registryFileBeforeTheChain(dir, [
      ['ada', 'material.create', null],
      ['ada', 'version.import', 1],
      ['bob', 'version.approve', 1],
    ]);
  }

  it('gets a genesis event over every stored hash and the earlier log, and verifies; later edits of either are caught', async () => {
    const path = oldRegistry();
    const registry = await openRegistry(path);
    try {
      const rows = await readAuditRows(registry);
      expect(rows.map((r) => [r.action, r.hash === null])).toEqual([
        ['material.create', true],
        ['version.import', true],
        ['version.approve', true],
        [GENESIS_TYPE, false],
      ]);
      const genesis = JSON.parse(rows[3].detail);
      expect(genesis.versions).toEqual([
        {
          ref: 'old-film@1',
          sha256: expect.stringMatching(/^[0-9a-f]{64}$/),
          status: 'approved',
          created_by: 'ada',
          approved_by: 'bob',
          retired_by: null,
          withdrawn_by: null,
        },
      ]);
      expect(genesis.earlier_events).toBe(3);
      expect((await verifyRegistry(registry)).ok).toBe(true);
      // Opening again does not start a second chain.
      await (await openRegistry(path)).close();
      expect((await readAuditRows(registry)).filter((r: AuditRow) => r.action === GENESIS_TYPE)).toHaveLength(1);

      registry.sqlite.exec('DROP TRIGGER audit_log_no_update');
      registry.sqlite.exec("UPDATE audit_log SET actor = 'mallory' WHERE id = 3");
      expect((await verifyRegistry(registry)).chain.problems).toEqual([
        'the 3 audit rows written before the chain started no longer match the digest its genesis event recorded',
      ]);
    } finally {
      await registry.close();
    }
  });
});

// The same chain on PostgreSQL: its trigger twins (drizzle-pg/) refuse what SQLite's refuse, and verify finds what gets past them.
describe.skipIf(!BACKENDS.includes('postgres'))('the audit chain on PostgreSQL', () => {
  let p: TempRegistry;
  beforeEach(async () => {
    p = await tempRegistry('postgres');
    await createMaterial(p.registry, { slug: 'film', name: 'Film' }, 'ada');
    await importVersion(p.registry, { slug: 'film', table: cauchyTable(1.45) }, 'ada');
    await importVersion(p.registry, { slug: 'film', table: cauchyTable(1.46) }, 'ada');
    await approve(p.registry, 'film@1', 'bob');
  });
  afterEach(() => p.cleanup());

  it('links every event to the one before it, with the same hashes of the same documents', async () => {
    const rows = await readAuditRows(p.registry);
    expect(rows.map((r) => r.action)).toEqual([GENESIS_TYPE, 'material.create', 'version.import', 'version.import', 'version.approve']);
    for (let i = 1; i < rows.length; i++) expect(rows[i].prev_hash).toBe(rows[i - 1].hash);
    for (const row of rows) expect(row.hash).toBe(sha256Hex(canonicalJson(eventDocument(row))));
    expect(await chainHead(p.registry)).toEqual({ hash: rows[4].hash, sequence: 5 });
    expect((await verifyRegistry(p.registry)).ok).toBe(true);
  });

  it('refuses, in PostgreSQL itself, an audit row that does not extend the chain, an edit, a delete and TRUNCATE', async () => {
    await expect(
      rawSql(p.registry, "INSERT INTO audit_log (at, actor, action, detail) VALUES ('2025-01-01T00:00:00.000Z', 'mallory', 'version.approve', '{}')"),
    ).rejects.toThrow(/extend the chain/);
    await expect(rawSql(p.registry, "UPDATE audit_log SET actor = 'carol'")).rejects.toThrow(/append-only/);
    await expect(rawSql(p.registry, 'DELETE FROM audit_log')).rejects.toThrow(/append-only/);
    await expect(rawSql(p.registry, 'TRUNCATE audit_log')).rejects.toThrow(/append-only|cannot truncate/);
  });

  it('verify finds a status changed without an audit row, an edited event and an emptied log', async () => {
    await rawSql(
      p.registry,
      "UPDATE material_versions SET status = 'approved', approved_by = 'carol', approved_at = '2025-01-01T00:00:00.000Z', self_approved = false WHERE number = 2",
    );
    expect((await verifyRegistry(p.registry)).state_mismatches.map((m) => m.problem)).toEqual([
      'film@2: it is approved, but the audit chain has it draft (status changed outside nkledger)',
      'film@2: it says approved by carol, but the audit chain says nobody',
    ]);
    await dropTrigger(p.registry, 'audit_log_no_update');
    await rawSql(p.registry, "UPDATE audit_log SET actor = 'carol' WHERE action = 'version.approve'");
    const edited = await verifyRegistry(p.registry);
    expect(edited.chain.problems).toEqual([
      expect.stringMatching(/audit event 5 \(version\.approve, sequence 5\): its content no longer matches its hash/),
    ]);
    expect(edited.missing_triggers).toEqual(['audit_log_no_update']);
    await dropTrigger(p.registry, 'audit_log_no_delete');
    await rawSql(p.registry, 'DELETE FROM audit_log');
    expect((await verifyRegistry(p.registry)).chain.problems).toEqual(['the audit log has no hash chain (no chain.genesis event)']);
  });
});
