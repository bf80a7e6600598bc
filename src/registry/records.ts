/**
 * Row ↔ record mapping, the hashed document, and the one write-transaction helper every registry
 * write goes through (BEGIN IMMEDIATE, audit row inside the same transaction).
 */
import { and, asc, eq, getTableColumns, sql } from 'drizzle-orm';
import { ConflictError, EnvironmentError, IntegrityError, NotFoundError } from '../errors.ts';
import { tableRangeNm } from '../table.ts';
import { canonicalJson, canonicalSha256, sha256Hex } from './canonical.ts';
import { appendEvent, type NewEvent } from './chain.ts';
import { translateFaults } from './faults.ts';
import { first, queryRow, queryRows } from './sql.ts';
import { immediateTransaction } from './transaction.ts';
import { stillSameFile, type Registry } from './open.ts';
import { formatRef } from './refs.ts';
import type * as tableTypes from './schema.ts';
import type { MaterialRecord, Provenance, VersionContent, VersionRecord } from './types.ts';

export type MaterialRow = typeof tableTypes.materials.$inferSelect;
export type VersionRow = typeof tableTypes.materialVersions.$inferSelect;

/**
 * The layout of what a version's SHA-256 covers (the document below). Changing what is hashed makes a new
 * layout: bump this, keep verifying stored versions by the layout they were hashed with, and add a pin for
 * the new layout with scripts/make-version-hash-pins.py (test/registry/version-hash-pin.test.ts); old pins
 * are never edited.
 */
export const VERSION_HASH_LAYOUT = 1;

/**
 * The SHA-256 of a version (layout VERSION_HASH_LAYOUT): of the canonical JSON of `{ "content": {table, fit, kk}, "provenance": {...} }`
 * (src/registry/canonical.ts; DEVELOPERS.md "Canonical serialization and hashing").
 */
export function versionSha256(content: VersionContent, provenance: Provenance): string {
  return canonicalSha256({ content, provenance });
}

/** The current time as ISO 8601 UTC with milliseconds. */
export function nowIso(): string {
  return new Date().toISOString();
}

/** Registries opened by a server process (`nkledger serve`): the writers the setting writes=server-only allows. */
const servedRegistries = new WeakSet<Registry>();

/** Mark `registry` as the one a server writes through (src/api/app.ts). Other processes' writes are then direct writes. */
export function markServerProcess(registry: Registry): void {
  servedRegistries.add(registry);
}

export function isServerProcess(registry: Registry): boolean {
  return servedRegistries.has(registry);
}

/**
 * The setting `writes` (src/service/settings.ts) read with plain SQL, inside the write transaction: with
 * "server-only" only the server process writes, so the two-person rule rests on tokens, not on names a
 * command line may choose.
 */
async function refuseDirectWrite(registry: Registry): Promise<void> {
  if (servedRegistries.has(registry)) return;
  const row = await queryRow<{ value: string }>(registry, sql`SELECT value FROM registry_settings WHERE key = 'writes'`);
  if (row && JSON.parse(row.value) === 'server-only')
    throw new ConflictError(
      `registry ${registry.path} takes writes only through its server (setting writes=server-only), so who acts comes from a token; nothing was written`,
      'writes-server-only',
    );
}

/**
 * Run `write` as one BEGIN IMMEDIATE transaction: it sees and holds the write lock from its first statement.
 * Write transactions of one Registry run one at a time (an async mutex, src/registry/transaction.ts); one
 * started inside another's callback joins it as a savepoint instead of waiting for it.
 * `write` must await only database work on this registry (no network, no worker pool): the lock is held
 * meanwhile. Refused before it starts when the registry is read-only or its file was removed or replaced
 * since it was opened, and at its start when the registry takes writes only through its server and this is
 * not the server; SQLite's faults (full disk, I/O error, corruption) become EnvironmentErrors, the
 * transaction rolled back whole.
 */
export async function writeTransaction<T>(registry: Registry, write: () => Promise<T>): Promise<T> {
  if (registry.readonly) {
    throw new EnvironmentError(
      'registry-read-only',
      `registry ${registry.path} is open read-only (asked for, or the file or its folder is not writable); nothing was written`,
    );
  }
  if (!stillSameFile(registry)) {
    throw new EnvironmentError(
      'registry-replaced',
      `registry ${registry.path} was removed or replaced since this process opened it; writes would be lost, so nothing was written (restart the server to use the file now at that path)`,
    );
  }
  return translateFaults(registry.path, () =>
    immediateTransaction(registry, async () => {
      await refuseDirectWrite(registry);
      return write();
    }),
  );
}

/** Append an audit event to the hash chain (src/registry/chain.ts); call inside `writeTransaction`. */
export async function appendAudit(registry: Registry, entry: NewEvent): Promise<void> {
  await appendEvent(registry, entry);
}

export async function findMaterial(registry: Registry, slug: string): Promise<MaterialRow> {
  const { materials } = registry.tables;
  const row = await first(registry.db.select().from(materials).where(eq(materials.slug, slug)).limit(1));
  if (!row) throw new NotFoundError(`no material "${slug}" in the registry`, 'material-unknown', {}, { value: slug });
  return row;
}

export async function findVersion(registry: Registry, material: MaterialRow, number: number): Promise<VersionRow> {
  const { materialVersions } = registry.tables;
  const row = await first(
    registry.db
      .select()
      .from(materialVersions)
      .where(and(eq(materialVersions.materialId, material.id), eq(materialVersions.number, number)))
      .limit(1),
  );
  if (!row) throw new NotFoundError(`${material.slug} has no version ${number}: ${existingVersions(material)}`, 'version-unknown');
  return row;
}

/** Which version numbers a material has, for not-found messages: "it has no versions yet (add one: ...)". */
export function existingVersions(material: MaterialRow): string {
  const last = material.lastVersion;
  if (last === 0) return 'it has no versions yet (importing a measurement adds one)';
  return last === 1 ? 'only version 1 exists' : `versions 1 to ${last} exist`;
}

export function provenanceOf(row: VersionRow): Provenance {
  return {
    sample: row.sample,
    substrate: row.substrate,
    process: row.process,
    instrument: row.instrument,
    method: row.method,
    angles_deg: row.anglesDeg === null ? null : (JSON.parse(row.anglesDeg) as number[]),
    measured_on: row.measuredOn,
    operator: row.operator,
    source_file: row.sourceFile,
    source_sha256: row.sourceSha256,
    notes: row.notes,
    ...(row.preamble !== null && { preamble: JSON.parse(row.preamble) as string[] }),
    ...(row.absentColumns !== null && { absent_columns: JSON.parse(row.absentColumns) as string[] }),
  };
}

export function contentOf(row: VersionRow): VersionContent {
  return JSON.parse(row.content) as VersionContent;
}

/**
 * The content of a version about to be served, after recomputing its SHA-256 from the stored content and
 * provenance: a row edited outside nkledger (triggers dropped, content changed) is refused with an
 * IntegrityError instead of being served as if it were good. Costs one parse, one canonical serialization
 * and one SHA-256 of the version (well under a millisecond for a table of a few hundred rows).
 */
export function verifiedContentOf(row: VersionRow, ref: string): VersionContent {
  let content: VersionContent;
  let computed: string | null = null;
  try {
    // nkledger stores the content as its canonical JSON, so the hashed document is that text with the
    // provenance beside it: hashing it as stored skips re-serializing thousands of numbers. Any other text
    // (a row edited outside nkledger, or written otherwise) takes the full path below, as before.
    if (sha256Hex(`{"content":${row.content},"provenance":${canonicalJson(provenanceOf(row))}}`) === row.sha256) return contentOf(row);
  } catch {
    // Unreadable provenance: the full path below refuses it.
  }
  try {
    content = contentOf(row);
    computed = versionSha256(content, provenanceOf(row));
  } catch {
    // Unreadable JSON or an unhashable value: falls through to the refusal below.
  }
  if (computed === null || computed !== row.sha256) {
    throw new IntegrityError(
      `${ref}: the stored content or provenance no longer matches its SHA-256 ${row.sha256.slice(0, 12)}…; the database was changed outside nkledger. ` +
        'It is not served: verify the registry and restore it from a backup',
    );
  }
  return content!;
}

/** Where a version may be evaluated: the model's validity range, else the measured range (nm). */
export function usableRangeNm(content: VersionContent): [number, number] {
  if (content.fit) return [content.fit.range_nm[0], content.fit.range_nm[1]];
  if (content.table) return tableRangeNm(content.table);
  throw new Error('a version holds neither a table nor a model');
}

export function versionRecord(slug: string, row: VersionRow, content: VersionContent = contentOf(row)): VersionRecord {
  return {
    ref: formatRef(slug, row.number),
    slug,
    version: row.number,
    status: row.status,
    sha256: row.sha256,
    has_table: content.table !== null,
    model: content.fit?.model ?? null,
    kk_verdict: content.kk?.verdict ?? null,
    range_nm: usableRangeNm(content),
    provenance: provenanceOf(row),
    created_by: row.createdBy,
    created_at: row.createdAt,
    approved_by: row.approvedBy,
    approved_at: row.approvedAt,
    self_approved: row.selfApproved === true,
    retired_by: row.retiredBy,
    retired_at: row.retiredAt,
    retire_reason: row.retireReason,
    withdrawn_by: row.withdrawnBy,
    withdrawn_at: row.withdrawnAt,
    withdraw_reason: row.withdrawReason,
  };
}

/** Newest approved (not retired) version number of a material, or null. */
export async function latestApprovedNumber(registry: Registry, materialId: number): Promise<number | null> {
  const { materialVersions } = registry.tables;
  const row = await first(
    registry.db
      .select({ number: sql<number | null>`max(${materialVersions.number})` })
      .from(materialVersions)
      .where(and(eq(materialVersions.materialId, materialId), eq(materialVersions.status, 'approved'))),
  );
  return row?.number ?? null;
}

/** The latest approved version number of every material that has one, in one query (lists of many materials). */
export async function latestApprovedNumbers(registry: Registry): Promise<Map<number, number>> {
  const rows = await queryRows<{ id: number; number: number }>(
    registry,
    sql`SELECT material_id AS id, max(number) AS number FROM material_versions WHERE status = 'approved' GROUP BY material_id`,
  );
  return new Map(rows.map((r) => [r.id, r.number]));
}

/** `latest`: the numbers of latestApprovedNumbers, so a list costs one query instead of one per material. */
export async function materialRecord(registry: Registry, row: MaterialRow, latest?: Map<number, number>): Promise<MaterialRecord> {
  return {
    slug: row.slug,
    name: row.name,
    description: row.description,
    tags: JSON.parse(row.tags) as string[],
    created_by: row.createdBy,
    created_at: row.createdAt,
    versions: row.lastVersion,
    latest_approved: latest ? (latest.get(row.id) ?? null) : await latestApprovedNumber(registry, row.id),
  };
}

/**
 * What a version's record needs of its content (has a table and its range, the model and its range, the KK
 * verdict), cut out by SQLite: listing a material's versions (getMaterial, history) then never parses whole tables and KK reports in
 * JavaScript (for 50 versions of 300 rows, about 30 ms less per list on this machine: scripts/bench-web.ts).
 */
const CONTENT_SUMMARY = sql<string>`json_object(
  'table', CASE WHEN json_type(content, '$.table') = 'object'
    THEN json_object('wavelengthNm', json_array(content ->> '$.table.wavelengthNm[0]', content ->> '$.table.wavelengthNm[#-1]'), 'n', json_array(), 'k', json_array()) END,
  'fit', CASE WHEN json_type(content, '$.fit') = 'object'
    THEN json_object('model', content ->> '$.fit.model', 'range_nm', content -> '$.fit.range_nm', 'parameters', json_object()) END,
  'kk', CASE WHEN json_type(content, '$.kk') = 'object' THEN json_object('verdict', content ->> '$.kk.verdict') END)`;

/** The version rows of a material, oldest first, with `content` cut down to CONTENT_SUMMARY (enough for versionRecord). */
export async function versionSummaryRows(registry: Registry, materialId: number): Promise<VersionRow[]> {
  const { materialVersions } = registry.tables;
  const { content: _content, ...columns } = getTableColumns(materialVersions);
  const summary = registry.pg ? (await import('./content-summary-pg.ts')).CONTENT_SUMMARY_PG : CONTENT_SUMMARY;
  return registry.db
    .select({ ...columns, content: summary })
    .from(materialVersions)
    .where(eq(materialVersions.materialId, materialId))
    .orderBy(asc(materialVersions.number));
}
