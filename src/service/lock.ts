/**
 * Design lockfiles: which version (number and content hash) of each material a design uses, and the
 * registry's audit-chain head when the last pin was added (src/registry/chain.ts).
 *
 * Format (JSON, format_version 2):
 *   { "format": "nkledger-lock", "format_version": 2,
 *     "registry_head": { "hash": "<64 hex>", "sequence": 57 },
 *     "materials": { "<slug>": { "version": 3, "sha256": "<64 hex>", "added_at": "<ISO 8601>" } } }
 * One entry per material, slugs sorted; written with two-space indentation and a final newline.
 * Format 1 (no registry_head) is still read; the next `lock add` writes it back as format 2.
 */
import { readFileSync, renameSync, writeFileSync } from 'node:fs';
import { and, asc, eq, gt } from 'drizzle-orm';
import { z } from 'zod';
import { ConflictError, InputError, NotFoundError } from '../errors.ts';
import { chainHead, readAuditRows, walkChain } from '../registry/chain.ts';
import type { Registry } from '../registry/open.ts';
import { findMaterial } from '../registry/records.ts';
import { formatRef, SLUG_PATTERN } from '../registry/refs.ts';
import type { VersionStatus } from '../registry/types.ts';
import { recomputedSha256 } from './registry-admin.ts';
import { resolveRow } from './versions.ts';

export const LOCK_FORMAT = 'nkledger-lock';
export const LOCK_FORMAT_VERSION = 2;
/** Lockfile formats this nkledger reads. */
const READABLE_FORMAT_VERSIONS = [1, 2] as const;

const hex64 = z.string().regex(/^[0-9a-f]{64}$/, 'must be 64 lowercase hex digits');
const lockEntrySchema = z.strictObject({
  version: z.number().int().min(1),
  sha256: hex64,
  added_at: z.string().optional(),
});
const headSchema = z.strictObject({ hash: hex64, sequence: z.number().int().min(1) });
/** The lockfile, as read by parseLockfile (exported for the HTTP API's description). */
export const LOCKFILE_SCHEMA = z.strictObject({
  format: z.literal(LOCK_FORMAT),
  format_version: z.union(READABLE_FORMAT_VERSIONS.map((v) => z.literal(v))),
  registry_head: headSchema.optional(),
  materials: z.record(z.string().regex(SLUG_PATTERN, 'material keys are slugs'), lockEntrySchema),
});

export type LockEntry = z.infer<typeof lockEntrySchema>;
export type Lockfile = z.infer<typeof LOCKFILE_SCHEMA>;
export type LockedHead = z.infer<typeof headSchema>;

export function emptyLockfile(): Lockfile {
  return { format: LOCK_FORMAT, format_version: LOCK_FORMAT_VERSION, materials: {} };
}

/** Parse and check lockfile text (or an already-parsed JSON value, as the HTTP API receives it). */
export function parseLockfile(input: string | unknown, file = '<lockfile>'): Lockfile {
  let value: unknown = input;
  if (typeof input === 'string') {
    try {
      value = JSON.parse(input);
    } catch (err) {
      throw new InputError('lock-json', `not JSON: ${(err as Error).message}`, { file });
    }
  }
  const parsed = LOCKFILE_SCHEMA.safeParse(value);
  if (!parsed.success) {
    const issue = parsed.error.issues[0];
    const where = issue.path.length ? issue.path.join('.') : '(top level)';
    throw new InputError(
      'lock-format',
      `not an nkledger lockfile (format_version ${READABLE_FORMAT_VERSIONS.join(' or ')}): ${where}: ${issue.message}`,
      { file },
    );
  }
  if (parsed.data.format_version === 1 && parsed.data.registry_head) {
    throw new InputError('lock-format', 'registry_head appears only in format_version 2 lockfiles', { file });
  }
  return parsed.data;
}

export function serializeLockfile(lock: Lockfile): string {
  const materials = Object.fromEntries(
    Object.keys(lock.materials)
      .sort()
      .map((slug) => [slug, lock.materials[slug]]),
  );
  const head = lock.registry_head ? { registry_head: lock.registry_head } : {};
  return `${JSON.stringify({ format: LOCK_FORMAT, format_version: LOCK_FORMAT_VERSION, ...head, materials }, null, 2)}\n`;
}

/** Read a lockfile; a missing file is an empty lockfile only when `allowMissing`. */
export function readLockfile(path: string, options: { allowMissing?: boolean } = {}): Lockfile {
  let text: string;
  try {
    text = readFileSync(path, 'utf8');
  } catch (err) {
    if ((err as NodeJS.ErrnoException).code === 'ENOENT') {
      if (options.allowMissing) return emptyLockfile();
      throw new InputError('lock-missing', `no lockfile ${path}`, { file: path });
    }
    throw new InputError('lock-read', `cannot read the lockfile: ${(err as Error).message}`, { file: path });
  }
  return parseLockfile(text, path);
}

/** Write a lockfile atomically (temp file + rename). */
export function writeLockfile(path: string, lock: Lockfile): void {
  const temp = `${path}.${process.pid}.tmp`;
  writeFileSync(temp, serializeLockfile(lock));
  renameSync(temp, path);
}

export interface LockAddResult {
  lock: Lockfile;
  ref: string;
  entry: LockEntry;
  /** The entry this one replaced (another version of the same material), if any. */
  replaced: LockEntry | null;
  notices: string[];
  warnings: string[];
}

/** Pin `ref` in `lock` (returns a new lockfile; the input is not changed). Withdrawn versions are refused. */
export async function lockAdd(registry: Registry, lock: Lockfile, ref: string): Promise<LockAddResult> {
  const { resolved } = await resolveRow(registry, ref);
  if (resolved.status === 'withdrawn') throw new ConflictError(`${resolved.ref} was withdrawn; a design must not pin it`, 'lock-withdrawn');
  const entry: LockEntry = { version: resolved.version, sha256: resolved.sha256, added_at: new Date().toISOString() };
  const replaced = lock.materials[resolved.slug] ?? null;
  const notices = resolved.notices.filter((n) => !n.includes('not a pin'));
  if (replaced && replaced.version !== entry.version) notices.push(`replaced ${formatRef(resolved.slug, replaced.version)} with ${resolved.ref}`);
  const head = await chainHead(registry);
  return {
    lock: {
      ...lock,
      format_version: LOCK_FORMAT_VERSION,
      ...(head ? { registry_head: { hash: head.hash, sequence: head.sequence } } : {}),
      materials: { ...lock.materials, [resolved.slug]: entry },
    },
    ref: resolved.ref,
    entry,
    replaced,
    notices,
    warnings: resolved.warnings,
  };
}

export type LockOutcome = 'ok' | 'mismatch' | 'missing' | 'retired' | 'draft' | 'withdrawn';

export interface LockCheck {
  ref: string;
  slug: string;
  version: number;
  locked_sha256: string;
  /** The hash recomputed from the version's content and provenance now; null when missing or unreadable. */
  registry_sha256: string | null;
  status: VersionStatus | null;
  outcome: LockOutcome;
  /** True when this entry makes the verification fail. */
  failed: boolean;
  message: string;
}

/**
 * Whether the registry's history still contains the head recorded in the lockfile: `ok` (the chain is whole
 * and holds that event at that place, so history was only appended to), `rewritten` (it does not),
 * `broken` (the chain itself has broken links or edited events), `not-recorded` (a format 1 lockfile, or
 * a registry without a chain when the pin was added: nothing to prove; a warning).
 */
export interface LockHistoryCheck {
  outcome: 'ok' | 'rewritten' | 'broken' | 'not-recorded';
  locked_head: LockedHead | null;
  registry_head: LockedHead | null;
  failed: boolean;
  message: string;
}

export interface LockVerifyReport {
  ok: boolean;
  strict: boolean;
  entries: LockCheck[];
  history: LockHistoryCheck;
  failures: number;
  warnings: number;
}

async function checkHistory(registry: Registry, locked: LockedHead | undefined): Promise<LockHistoryCheck> {
  const walk = walkChain(await readAuditRows(registry));
  const registryHead = walk.head ? { hash: walk.head.hash, sequence: walk.head.sequence } : null;
  const base = { locked_head: locked ?? null, registry_head: registryHead };
  if (walk.problems.length > 0) {
    return {
      ...base,
      outcome: 'broken',
      failed: true,
      message: `the registry's audit chain is broken (${walk.problems[0]}${walk.problems.length > 1 ? `, and ${walk.problems.length - 1} more` : ''}); verify the registry`,
    };
  }
  if (!locked) {
    return {
      ...base,
      outcome: 'not-recorded',
      failed: false,
      message: 'the lockfile records no registry head (format 1): history not checked; the next version pinned in it records one',
    };
  }
  if (walk.hashes[locked.sequence - 1] !== locked.hash) {
    return {
      ...base,
      outcome: 'rewritten',
      failed: true,
      message: `the registry's history no longer contains the head this lockfile recorded (event ${locked.sequence}, ${locked.hash.slice(0, 12)}…): history was rewritten, or this is another registry`,
    };
  }
  return {
    ...base,
    outcome: 'ok',
    failed: false,
    message: `history ok: the registry's audit chain still contains event ${locked.sequence} (${locked.hash.slice(0, 12)}…) and has ${registryHead!.sequence - locked.sequence} event(s) after it`,
  };
}

/**
 * Check every entry: missing materials or versions and content that no longer hashes to the locked SHA-256
 * (recomputed from the stored content, not read from the hash column) always fail; retired, draft and
 * withdrawn versions are warnings, and failures with `strict`. Then prove the registry's history still
 * contains the audit-chain head the lockfile recorded.
 */
export async function lockVerify(registry: Registry, lock: Lockfile, options: { strict?: boolean } = {}): Promise<LockVerifyReport> {
  const strict = options.strict ?? false;
  const entries: LockCheck[] = [];
  for (const slug of Object.keys(lock.materials).sort()) entries.push(await checkEntry(slug));
  async function checkEntry(slug: string): Promise<LockCheck> {
    const locked = lock.materials[slug];
    const ref = formatRef(slug, locked.version);
    const base = { ref, slug, version: locked.version, locked_sha256: locked.sha256 };
    let row;
    try {
      row = (await resolveRow(registry, ref)).row;
    } catch (err) {
      if (!(err instanceof NotFoundError)) throw err;
      return { ...base, registry_sha256: null, status: null, outcome: 'missing', failed: true, message: `${ref} is missing: ${err.message}` };
    }
    const computed = recomputedSha256(row);
    if (computed !== locked.sha256) {
      const column = row.sha256 === locked.sha256 ? ' (its stored hash column still says the locked value: the content was changed under it)' : '';
      return {
        ...base,
        registry_sha256: computed,
        status: row.status,
        outcome: 'mismatch',
        failed: true,
        message: `${ref} content differs: locked sha256 ${locked.sha256.slice(0, 12)}…, its content now hashes to ${computed === null ? 'nothing (unreadable)' : `${computed.slice(0, 12)}…`}${column}`,
      };
    }
    if (row.status === 'approved')
      return { ...base, registry_sha256: computed, status: row.status, outcome: 'ok', failed: false, message: `${ref} ok` };
    const why =
      row.status === 'retired'
        ? `retired: ${row.retireReason}`
        : row.status === 'withdrawn'
          ? 'withdrawn: nobody should use it'
          : 'a draft, not approved';
    return { ...base, registry_sha256: computed, status: row.status, outcome: row.status, failed: strict, message: `${ref} is ${why}` };
  }
  const history = await checkHistory(registry, lock.registry_head);
  const failures = entries.filter((e) => e.failed).length + (history.failed ? 1 : 0);
  const warnings = entries.filter((e) => !e.failed && e.outcome !== 'ok').length + (history.outcome === 'not-recorded' ? 1 : 0);
  return { ok: failures === 0, strict, entries, history, failures, warnings };
}

export interface LockOutdatedEntry {
  ref: string;
  slug: string;
  locked_version: number;
  /** Approved versions newer than the locked one, oldest first. */
  newer_approved: number[];
  latest_approved: number | null;
}

/** For each entry, the approved versions newer than the one locked (only entries that have some). */
export async function lockOutdated(registry: Registry, lock: Lockfile): Promise<LockOutdatedEntry[]> {
  const { materialVersions } = registry.tables;
  const out: LockOutdatedEntry[] = [];
  for (const slug of Object.keys(lock.materials).sort()) {
    const locked = lock.materials[slug];
    let material;
    try {
      material = await findMaterial(registry, slug);
    } catch (err) {
      if (err instanceof NotFoundError) continue; // lock verify reports missing materials
      throw err;
    }
    const newer = (
      await registry.db
        .select({ number: materialVersions.number })
        .from(materialVersions)
        .where(
          and(eq(materialVersions.materialId, material.id), eq(materialVersions.status, 'approved'), gt(materialVersions.number, locked.version)),
        )
        .orderBy(asc(materialVersions.number))
    ).map((r) => r.number);

    if (newer.length)
      out.push({
        ref: formatRef(slug, locked.version),
        slug,
        locked_version: locked.version,
        newer_approved: newer,
        latest_approved: newer[newer.length - 1],
      });
  }
  return out;
}
