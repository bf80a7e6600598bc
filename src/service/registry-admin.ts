/** Whole-registry checks and copies: `verify` (recompute every hash) and `backup` (SQLite online backup). */
import { existsSync, linkSync, rmSync } from 'node:fs';
import { asc, eq } from 'drizzle-orm';
import { ConflictError, InputError } from '../errors.ts';
import type { Registry } from '../registry/open.ts';
import { provenanceOf, versionSha256, type VersionRow } from '../registry/records.ts';
import { formatRef } from '../registry/refs.ts';
import { materials, materialVersions } from '../registry/schema.ts';
import type { VersionContent } from '../registry/types.ts';

/** Triggers created by drizzle/0001_immutability.sql; verify reports any that someone dropped. */
export const IMMUTABILITY_TRIGGERS = [
  'material_versions_content_immutable',
  'material_versions_status_transitions',
  'material_versions_lifecycle_set_once',
  'material_versions_no_delete',
  'materials_no_delete',
  'materials_identity_immutable',
  'audit_log_no_update',
  'audit_log_no_delete',
] as const;

export interface HashMismatch {
  ref: string;
  stored_sha256: string;
  /** Null when the stored content is not even readable JSON. */
  computed_sha256: string | null;
  reason: string;
}

export interface VerifyReport {
  /** True when every hash matches, no version number is missing and every trigger is in place. */
  ok: boolean;
  checked_versions: number;
  mismatches: HashMismatch[];
  /** Version numbers that were assigned but whose rows are gone (`slug@N`). */
  missing_versions: string[];
  missing_triggers: string[];
}

function recompute(row: VersionRow): { computed: string | null; reason: string } {
  let content: VersionContent;
  try {
    content = JSON.parse(row.content) as VersionContent;
  } catch {
    return { computed: null, reason: 'stored content is not valid JSON' };
  }
  try {
    return { computed: versionSha256(content, provenanceOf(row)), reason: 'content or provenance no longer matches its SHA-256' };
  } catch (err) {
    return { computed: null, reason: `stored content cannot be hashed: ${(err as Error).message}` };
  }
}

/** Recompute the SHA-256 of every version and check numbering and triggers. Reads only. */
export function verifyRegistry(registry: Registry): VerifyReport {
  const mismatches: HashMismatch[] = [];
  const missing: string[] = [];
  let checked = 0;
  const read = registry.sqlite.transaction(() => {
    for (const material of registry.db.select().from(materials).orderBy(asc(materials.slug)).all()) {
      const rows = registry.db.select().from(materialVersions).where(eq(materialVersions.materialId, material.id)).orderBy(asc(materialVersions.number)).all();
      const present = new Set(rows.map((r) => r.number));
      for (let n = 1; n <= material.lastVersion; n++) if (!present.has(n)) missing.push(formatRef(material.slug, n));
      for (const row of rows) {
        checked++;
        const { computed, reason } = recompute(row);
        if (computed !== row.sha256) mismatches.push({ ref: formatRef(material.slug, row.number), stored_sha256: row.sha256, computed_sha256: computed, reason });
      }
    }
  });
  read.deferred();
  const triggers = new Set(
    (registry.sqlite.prepare("SELECT name FROM sqlite_master WHERE type = 'trigger'").all() as { name: string }[]).map((t) => t.name),
  );
  const missingTriggers = IMMUTABILITY_TRIGGERS.filter((name) => !triggers.has(name));
  return {
    ok: mismatches.length === 0 && missing.length === 0 && missingTriggers.length === 0,
    checked_versions: checked,
    mismatches,
    missing_versions: missing,
    missing_triggers: missingTriggers,
  };
}

/**
 * Pages copied per step of the online backup: all of them. SQLite restarts a backup whose source another
 * connection modifies between steps (sqlite.org/c3ref/backup_finish.html), so with writers active a
 * many-step backup may never finish; one step copies a single consistent snapshot (in WAL mode writers
 * go on meanwhile).
 */
const BACKUP_PAGES_PER_STEP = 0x7fffffff;

/**
 * Copy the live database to `destination` with SQLite's online backup (readers and writers may
 * continue meanwhile). The copy is written beside it first and linked into place only when complete,
 * so a failed or interrupted backup never leaves a partial file under the destination name. Refuses to
 * overwrite an existing file.
 */
export async function backup(registry: Registry, destination: string): Promise<{ path: string; pages: number }> {
  if (destination.trim() === '') throw new InputError('backup-path', 'give the file to write the backup to');
  if (existsSync(destination)) throw new ConflictError(`${destination} already exists; choose a new file (backups never overwrite)`, 'backup-exists');
  const partial = `${destination}.partial-${process.pid}`;
  try {
    const result = await registry.sqlite.backup(partial, { progress: () => BACKUP_PAGES_PER_STEP });
    linkSync(partial, destination); // fails with EEXIST rather than overwrite a file that appeared meanwhile
    return { path: destination, pages: result.totalPages };
  } catch (err) {
    if ((err as NodeJS.ErrnoException).code === 'EEXIST') throw new ConflictError(`${destination} already exists; choose a new file (backups never overwrite)`, 'backup-exists');
    throw new InputError('backup-failed', `cannot write the backup: ${(err as Error).message}`, { file: destination });
  } finally {
    rmSync(partial, { force: true });
  }
}
