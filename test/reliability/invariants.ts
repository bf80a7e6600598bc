/**
 * What must hold of a registry file after anything (a kill, concurrent writers, a backup): SQLite's own
 * integrity check, whole versions only (content, hash and audit row together), hole-free numbering with no
 * duplicates, every hash verifying, and an audit log that matches the versions' lifecycle one to one.
 * Returns the list of problems (empty when the registry is sound) and the versions seen.
 * `checkPostgresRegistry` makes the same checks (but SQLite's own) of a registry on PostgreSQL, reading its rows
 * on a plain connection of its own.
 */
import Database from 'better-sqlite3';
import pg from 'pg';
import { openRegistry, verifyRegistry } from '../../src/service/registry.ts';

export interface StoredVersion {
  ref: string;
  sha256: string;
  status: string;
}

export interface RegistryCheck {
  problems: string[];
  versions: Map<string, StoredVersion>;
}

interface Row {
  id: number;
  slug: string;
  last_version: number;
  number: number;
  status: string;
  content: string;
  sha256: string;
  approved_at: string | null;
  retired_at: string | null;
  withdrawn_at: string | null;
}

export async function checkRegistryFile(path: string): Promise<RegistryCheck> {
  const problems: string[] = [];
  // SQLite's own check first, on a plain connection (it also replays the WAL a killed writer left behind).
  const raw = new Database(path);
  try {
    const integrity = raw.pragma('integrity_check') as { integrity_check: string }[];
    if (integrity.length !== 1 || integrity[0].integrity_check !== 'ok') problems.push(`integrity_check: ${JSON.stringify(integrity)}`);
    const fk = raw.pragma('foreign_key_check') as unknown[];
    if (fk.length > 0) problems.push(`foreign_key_check: ${JSON.stringify(fk)}`);
  } finally {
    raw.close();
  }

  const registry = await openRegistry(path);
  const versions = new Map<string, StoredVersion>();
  try {
    const report = await verifyRegistry(registry);
    if (!report.ok) problems.push(`verify: ${JSON.stringify(report)}`);
    const rows = registry.sqlite
      .prepare(
        `SELECT v.id, m.slug, m.last_version, v.number, v.status, v.content, v.sha256, v.approved_at, v.retired_at, v.withdrawn_at
         FROM material_versions v JOIN materials m ON m.id = v.material_id ORDER BY m.slug, v.number`,
      )
      .all() as Row[];
    const audit = registry.sqlite.prepare('SELECT action, version_id AS versionId FROM audit_log WHERE version_id IS NOT NULL ORDER BY id').all() as {
      action: string;
      versionId: number;
    }[];
    const materials = registry.sqlite.prepare('SELECT slug, last_version FROM materials').all() as MaterialRow[];
    checkRows(rows, audit, materials, problems, versions);
  } finally {
    await registry.close();
  }
  return { problems, versions };
}

interface MaterialRow {
  slug: string;
  last_version: number;
}

interface AuditRow {
  action: string;
  versionId: number;
}

/** Numbering, hashes, content and audit trail of the rows read (either backend); adds to `problems` and `versions`. */
function checkRows(rows: Row[], audit: AuditRow[], materials: MaterialRow[], problems: string[], versions: Map<string, StoredVersion>): void {
  const auditOf = new Map<number, string[]>();
  for (const a of audit) auditOf.set(a.versionId, [...(auditOf.get(a.versionId) ?? []), a.action]);

  const bySlug = new Map<string, Row[]>();
  for (const r of rows) bySlug.set(r.slug, [...(bySlug.get(r.slug) ?? []), r]);
  for (const m of materials) {
    const numbers = (bySlug.get(m.slug) ?? []).map((r) => r.number);
    const expected = Array.from({ length: m.last_version }, (_, i) => i + 1);
    if (JSON.stringify(numbers) !== JSON.stringify(expected))
      problems.push(`${m.slug}: version numbers ${numbers.join(',')} but last_version ${m.last_version}`);
  }
  for (const r of rows) {
    const ref = `${r.slug}@${r.number}`;
    if (versions.has(ref)) problems.push(`${ref}: duplicate version number`);
    versions.set(ref, { ref, sha256: r.sha256, status: r.status });
    if (!/^[0-9a-f]{64}$/.test(r.sha256)) problems.push(`${ref}: malformed hash`);
    if (r.content.length < 20) problems.push(`${ref}: content missing`);
    // The audit trail of each version is exactly its lifecycle: one import, then one row per transition.
    const expectedActions = [
      'version.import',
      ...(r.approved_at ? ['version.approve'] : []),
      ...(r.retired_at ? ['version.retire'] : []),
      ...(r.withdrawn_at ? ['version.withdraw'] : []),
    ];
    const actions = auditOf.get(r.id) ?? [];
    if (JSON.stringify(actions) !== JSON.stringify(expectedActions))
      problems.push(`${ref} (${r.status}): audit ${actions.join(',')} ≠ ${expectedActions.join(',')}`);
    auditOf.delete(r.id);
  }
  if (auditOf.size > 0) problems.push(`audit rows for versions that do not exist: ${[...auditOf.keys()].join(',')}`);
}

/** The same checks of a registry on PostgreSQL at `url` (verifyRegistry through the registry, the rows on a connection of their own). */
export async function checkPostgresRegistry(url: string): Promise<RegistryCheck> {
  const problems: string[] = [];
  const versions = new Map<string, StoredVersion>();
  const registry = await openRegistry(url);
  try {
    const report = await verifyRegistry(registry);
    if (!report.ok) problems.push(`verify: ${JSON.stringify(report)}`);
  } finally {
    await registry.close();
  }
  const client = new pg.Client({ connectionString: url });
  await client.connect();
  try {
    // One snapshot for the three reads.
    await client.query('BEGIN ISOLATION LEVEL REPEATABLE READ READ ONLY');
    const rows = (
      await client.query<Row>(
        `SELECT v.id, m.slug, m.last_version, v.number, v.status, v.content, v.sha256, v.approved_at, v.retired_at, v.withdrawn_at
         FROM material_versions v JOIN materials m ON m.id = v.material_id ORDER BY m.slug, v.number`,
      )
    ).rows;
    const audit = (await client.query<AuditRow>('SELECT action, version_id AS "versionId" FROM audit_log WHERE version_id IS NOT NULL ORDER BY id'))
      .rows;
    const materials = (await client.query<MaterialRow>('SELECT slug, last_version FROM materials')).rows;
    await client.query('COMMIT');
    checkRows(rows, audit, materials, problems, versions);
  } finally {
    await client.end();
  }
  return { problems, versions };
}
