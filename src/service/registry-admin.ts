/** Whole-registry checks and copies: `verify` (hashes, audit chain, triggers, integrity) and `backup` (SQLite online backup). */
import { existsSync, linkSync, rmSync } from 'node:fs';
import { asc, eq } from 'drizzle-orm';
import { binaryOrder } from '../registry/sql.ts';
import { ConflictError, InputError } from '../errors.ts';
import { readAuditRows, walkChain, type ChainedVersion, type ChainHead, type ChainWalk } from '../registry/chain.ts';
import { environmentFault } from '../registry/faults.ts';
import { checkTriggers, integrityCheck, type TriggerCheck } from '../registry/integrity.ts';
import { onlineBackup, type Registry } from '../registry/open.ts';
import { readTransaction } from '../registry/transaction.ts';

import { provenanceOf, versionSha256, type VersionRow } from '../registry/records.ts';
import { formatRef } from '../registry/refs.ts';
import type { VersionContent } from '../registry/types.ts';

/** Triggers created by drizzle/0001_immutability.sql and 0007_audit_chain_append.sql (verify compares them all by their SQL). */
export const IMMUTABILITY_TRIGGERS = [
  'material_versions_content_immutable',
  'material_versions_status_transitions',
  'material_versions_lifecycle_set_once',
  'material_versions_no_delete',
  'materials_no_delete',
  'materials_identity_immutable',
  'audit_log_no_update',
  'audit_log_no_delete',
  'audit_log_chain_append',
] as const;

export interface HashMismatch {
  ref: string;
  stored_sha256: string;
  /** Null when the stored content is not even readable JSON. */
  computed_sha256: string | null;
  reason: string;
}

/** A version whose stored hash, status or lifecycle disagrees with what the audit chain recorded. */
export interface StateMismatch {
  ref: string;
  problem: string;
}

/** Checks of `verify` that have no equivalent on PostgreSQL, and why (VerifyReport.not_applicable). */
export const NOT_APPLICABLE_ON_POSTGRES: { check: string; reason: string }[] = [
  {
    check: 'integrity_check',
    reason:
      "SQLite's check of its file's pages; the server checks its own pages (data checksums, if the cluster has them), and its tools (pg_amcheck) make a structural check",
  },
  {
    check: 'file_identity',
    reason: 'there is no registry file whose replacement could be noticed: the database is reached through its URL',
  },
];

export interface VerifyReport {
  /** True when every check below found nothing. */
  ok: boolean;
  /** Which database holds the registry: the checks differ (not_applicable). */
  backend: 'sqlite' | 'postgres';
  /** Checks of the other backend that do not apply to this one, with the reason (empty on SQLite). */
  not_applicable: { check: string; reason: string }[];
  checked_versions: number;
  /** Versions whose content no longer hashes to their stored SHA-256. */
  mismatches: HashMismatch[];
  /** Version numbers that were assigned but whose rows are gone (`slug@N`). */
  missing_versions: string[];
  /** Triggers the migrations created that are gone. */
  missing_triggers: string[];
  /** Triggers present under their name with other SQL (a no-op `WHEN 0` replacement, say). */
  altered_triggers: string[];
  /** Triggers no migration created. */
  unexpected_triggers: string[];
  /** Triggers present but switched off (PostgreSQL's ALTER TABLE … DISABLE TRIGGER); empty on SQLite. */
  disabled_triggers: string[];
  /** The audit hash chain: its head (what a lockfile records) and every broken link or edited event. */
  chain: { head: ChainHead | null; problems: string[] };
  /** Versions whose content hash, status or approver disagree with the chain's events. */
  state_mismatches: StateMismatch[];
  /** Findings of SQLite's PRAGMA integrity_check (empty when it says ok). */
  integrity: string[];
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

/** The SHA-256 recomputed from a version's stored content and provenance (null when unreadable). */
export function recomputedSha256(row: VersionRow): string | null {
  return recompute(row).computed;
}

const LIFECYCLE_ACTORS = [
  ['created_by', 'createdBy', 'created'],
  ['approved_by', 'approvedBy', 'approved'],
  ['retired_by', 'retiredBy', 'retired'],
  ['withdrawn_by', 'withdrawnBy', 'withdrawn'],
] as const;

/** Compare one stored version with the chain's account of it. */
export function crossCheck(ref: string, row: VersionRow, computed: string | null, chained: ChainedVersion | undefined): string[] {
  if (!chained) return [`${ref}: the audit chain never recorded this version (inserted outside nkledger)`];
  const problems: string[] = [];
  if (computed !== null && computed !== chained.sha256) {
    problems.push(
      `its content hashes to ${computed.slice(0, 12)}…, but the audit chain recorded ${chained.sha256.slice(0, 12)}… (content rewritten)`,
    );
  }
  if (row.status !== chained.status)
    problems.push(`it is ${row.status}, but the audit chain has it ${chained.status} (status changed outside nkledger)`);
  for (const [chainKey, rowKey, verb] of LIFECYCLE_ACTORS) {
    const recorded = chained[chainKey];
    const stored = row[rowKey];
    // The genesis of an upgraded registry recorded no creator for versions made before it: nothing to compare.
    if (chainKey === 'created_by' && recorded === null) continue;
    if ((stored ?? null) !== (recorded ?? null))
      problems.push(`it says ${verb} by ${stored ?? 'nobody'}, but the audit chain says ${recorded ?? 'nobody'}`);
  }
  return problems.map((problem) => `${ref}: ${problem}`);
}

/**
 * Check the whole registry, reading only: SQLite's integrity check; every version's SHA-256 recomputed from
 * its content; numbering; the triggers by their full SQL; the audit hash chain link by link; and every
 * version's hash, status and lifecycle against the chain's events.
 */
export async function verifyRegistry(registry: Registry): Promise<VerifyReport> {
  const { materials, materialVersions } = registry.tables;
  const integrity = await integrityCheck(registry);
  const mismatches: HashMismatch[] = [];
  const missing: string[] = [];
  const stateMismatches: StateMismatch[] = [];
  let checked = 0;
  let walk: ChainWalk = { head: null, problems: [], versions: new Map(), hashes: [] };
  const seen = new Set<string>();
  let triggers: TriggerCheck | undefined;
  const read = async () => {
    // On PostgreSQL the catalogue is read in the same READ ONLY snapshot as the rows.
    if (registry.pg) triggers = await checkTriggers(registry);
    walk = walkChain(await readAuditRows(registry));
    for (const material of await registry.db
      .select()
      .from(materials)
      .orderBy(asc(binaryOrder(registry, materials.slug)))) {
      const rows = await registry.db
        .select()
        .from(materialVersions)
        .where(eq(materialVersions.materialId, material.id))
        .orderBy(asc(materialVersions.number));
      const present = new Set(rows.map((r) => r.number));
      for (let n = 1; n <= material.lastVersion; n++) if (!present.has(n)) missing.push(formatRef(material.slug, n));
      for (const row of rows) {
        checked++;
        const ref = formatRef(material.slug, row.number);
        seen.add(ref);
        const { computed, reason } = recompute(row);
        if (computed !== row.sha256) mismatches.push({ ref, stored_sha256: row.sha256, computed_sha256: computed, reason });
        for (const problem of crossCheck(ref, row, computed, walk.versions.get(ref))) stateMismatches.push({ ref, problem });
      }
    }
  };
  try {
    await readTransaction(registry, read);
  } catch (err) {
    // A file so damaged that reading it fails: report what integrity_check found, if it found anything.
    const fault = environmentFault(err, registry.path);
    if (!fault || integrity.length === 0) throw fault ?? err;
    integrity.push(`reading the registry failed: ${fault.message}`);
  }
  for (const ref of walk.versions.keys()) {
    if (!seen.has(ref) && !missing.includes(ref)) stateMismatches.push({ ref, problem: `${ref}: recorded in the audit chain but not stored` });
  }
  triggers ??= await checkTriggers(registry);
  return {
    backend: registry.dialect,
    not_applicable: registry.pg ? NOT_APPLICABLE_ON_POSTGRES : [],
    ok:
      integrity.length === 0 &&
      mismatches.length === 0 &&
      missing.length === 0 &&
      triggers.missing.length + triggers.altered.length + triggers.unexpected.length + triggers.disabled.length === 0 &&
      walk.problems.length === 0 &&
      stateMismatches.length === 0,
    checked_versions: checked,
    mismatches,
    missing_versions: missing,
    missing_triggers: triggers.missing,
    altered_triggers: triggers.altered,
    unexpected_triggers: triggers.unexpected,
    disabled_triggers: triggers.disabled,
    chain: { head: walk.head, problems: walk.problems },
    state_mismatches: stateMismatches,
    integrity,
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
  if (registry.pg) {
    throw new InputError(
      'backup-postgres',
      `registry ${registry.path} is a PostgreSQL database: back it up with the database's own tools — pg_dump for a consistent logical copy, or a base backup (pg_basebackup) with WAL archiving for point-in-time recovery; nothing was written`,
      {},
      { extensions: { backend: 'postgres', tools: ['pg_dump', 'pg_basebackup'] } },
    );
  }
  if (destination.trim() === '') throw new InputError('backup-path', 'give the file to write the backup to');
  if (existsSync(destination)) throw new ConflictError(`${destination} already exists; choose a new file (backups never overwrite)`, 'backup-exists');
  const partial = `${destination}.partial-${process.pid}`;
  try {
    const result = await onlineBackup(registry, partial, BACKUP_PAGES_PER_STEP);
    linkSync(partial, destination); // fails with EEXIST rather than overwrite a file that appeared meanwhile
    return { path: destination, pages: result.totalPages };
  } catch (err) {
    if ((err as NodeJS.ErrnoException).code === 'EEXIST')
      throw new ConflictError(`${destination} already exists; choose a new file (backups never overwrite)`, 'backup-exists');
    throw new InputError('backup-failed', `cannot write the backup: ${(err as Error).message}`, { file: destination });
  } finally {
    rmSync(partial, { force: true });
  }
}
