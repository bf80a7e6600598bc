/**
 * The registry's tables as code (drizzle-orm, SQLite). Migrations in ../../drizzle are generated
 * from this file by `npx drizzle-kit generate`; never edit a generated migration by hand.
 * Immutability and append-only rules are also enforced by SQLite triggers in a custom migration
 * (drizzle/0001_*.sql), so even raw SQL cannot rewrite content, hashes or history.
 *
 * Timestamps are ISO 8601 UTC strings (`2024-05-01T09:30:00.000Z`) so the raw database reads plainly.
 */
import { sql } from 'drizzle-orm';
import { check, index, integer, sqliteTable, text, uniqueIndex } from 'drizzle-orm/sqlite-core';

/** The lifecycle of a version: draft → approved → retired, or draft → withdrawn. */
export const VERSION_STATUSES = ['draft', 'approved', 'retired', 'withdrawn'] as const;
export type VersionStatus = (typeof VERSION_STATUSES)[number];

/** How the optical constants were measured (provenance field `method`). */
export const MEASUREMENT_METHODS = ['spectroscopic-ellipsometry', 'spectrophotometry', 'prism-coupling', 'other'] as const;
export type MeasurementMethod = (typeof MEASUREMENT_METHODS)[number];

/** A material: the thing designers ask for by slug (e.g. `sin-pecvd-a`). */
export const materials = sqliteTable('materials', {
  id: integer('id').primaryKey({ autoIncrement: true }),
  /** Lowercase letters, digits and single hyphens; never changes. */
  slug: text('slug').notNull().unique(),
  name: text('name').notNull(),
  description: text('description').notNull().default(''),
  /** JSON array of tag strings. */
  tags: text('tags').notNull().default('[]'),
  createdBy: text('created_by').notNull(),
  createdAt: text('created_at').notNull(),
  /** The highest version number ever assigned; the next version is lastVersion + 1 (numbers are never reused). */
  lastVersion: integer('last_version').notNull().default(0),
});

/** One immutable version of a material's optical constants, with its provenance and lifecycle. */
export const materialVersions = sqliteTable(
  'material_versions',
  {
    id: integer('id').primaryKey({ autoIncrement: true }),
    materialId: integer('material_id')
      .notNull()
      .references(() => materials.id),
    /** 1, 2, 3… per material, assigned inside the writing transaction. */
    number: integer('number').notNull(),
    status: text('status', { enum: VERSION_STATUSES }).notNull().default('draft'),
    /** Canonical JSON of `{ table, fit, kk }` (see src/registry/canonical.ts). Immutable. */
    content: text('content').notNull(),
    /** SHA-256 (lowercase hex) of the canonical hashed document `{ content, provenance }`. Immutable. */
    sha256: text('sha256').notNull(),
    // provenance (immutable, part of the hashed document)
    sample: text('sample'),
    substrate: text('substrate'),
    process: text('process'),
    instrument: text('instrument'),
    method: text('method', { enum: MEASUREMENT_METHODS }),
    /** JSON array of angles of incidence in degrees. */
    anglesDeg: text('angles_deg'),
    /** Measurement date, YYYY-MM-DD. */
    measuredOn: text('measured_on'),
    operator: text('operator'),
    sourceFile: text('source_file'),
    sourceSha256: text('source_sha256'),
    notes: text('notes'),
    /** JSON array of the lines above the file's header; NULL when there were none (then absent from the hash). */
    preamble: text('preamble'),
    /** JSON array of columns the file lacked (["k"]); NULL when none. */
    absentColumns: text('absent_columns'),
    // lifecycle (each field set once)
    createdBy: text('created_by').notNull(),
    createdAt: text('created_at').notNull(),
    approvedBy: text('approved_by'),
    approvedAt: text('approved_at'),
    /** 1 when the creator approved their own version under the self-approval setting. */
    selfApproved: integer('self_approved', { mode: 'boolean' }),
    retiredBy: text('retired_by'),
    retiredAt: text('retired_at'),
    retireReason: text('retire_reason'),
    withdrawnBy: text('withdrawn_by'),
    withdrawnAt: text('withdrawn_at'),
    withdrawReason: text('withdraw_reason'),
  },
  (t) => [
    uniqueIndex('material_versions_material_number').on(t.materialId, t.number),
    index('material_versions_sha256').on(t.sha256),
    check('material_versions_status', sql`${t.status} IN ('draft', 'approved', 'retired', 'withdrawn')`),
    check('material_versions_number', sql`${t.number} >= 1`),
  ],
);

/** Append-only record of every change: who, when, what. */
export const auditLog = sqliteTable(
  'audit_log',
  {
    id: integer('id').primaryKey({ autoIncrement: true }),
    at: text('at').notNull(),
    actor: text('actor').notNull(),
    /** e.g. `material.create`, `version.import`, `version.approve`, `version.retire`, `version.withdraw`, `setting.set`. */
    action: text('action').notNull(),
    materialId: integer('material_id').references(() => materials.id),
    versionId: integer('version_id').references(() => materialVersions.id),
    /** JSON object with the details of the change. */
    detail: text('detail').notNull().default('{}'),
    // The hash chain (src/registry/chain.ts). Rows written before the chain existed have none of these;
    // the chain starts at a `chain.genesis` event that covers them and every version stored at that time.
    /** Slug of the material the event concerns (slugs never change). */
    material: text('material'),
    /** Number of the version the event concerns. */
    versionNumber: integer('version_number'),
    /** The version's content SHA-256 as the event saw it (every version event carries it). */
    contentSha256: text('content_sha256'),
    /** Status change of a version event: from (null for an import) and to. */
    statusFrom: text('status_from'),
    statusTo: text('status_to'),
    /** Hash of the previous event of the chain (null only for the genesis event). */
    prevHash: text('prev_hash'),
    /** SHA-256 of this event's canonical JSON (chain.ts `eventDocument`). */
    hash: text('hash'),
  },
  (t) => [
    index('audit_log_material').on(t.materialId),
    uniqueIndex('audit_log_hash').on(t.hash),
    // One successor per event: the chain cannot fork.
    uniqueIndex('audit_log_prev_hash').on(t.prevHash),
  ],
);

/**
 * Every setting a lab can change (key → JSON value): registry rules such as `allow_self_approval` and the HTTP
 * API's (`anonymous_reads`, `cors_origins`, …). The catalogue of keys, defaults and meanings is SETTINGS in
 * src/service/settings.ts; a key without a row has its default.
 */
export const registrySettings = sqliteTable('registry_settings', {
  key: text('key').primaryKey(),
  value: text('value').notNull(),
  updatedBy: text('updated_by').notNull(),
  updatedAt: text('updated_at').notNull(),
});
