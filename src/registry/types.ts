/**
 * The registry's records as plain JSON (snake_case names, as the CLI's --json and the HTTP API print them).
 */
import type { NkTable } from '../table.ts';
import type { MeasurementMethod, VersionStatus } from './schema.ts';

export type { MeasurementMethod, VersionStatus };

/**
 * A fitted model as stored: FitReport (src/fit/fit.ts) — plain JSON with at least the
 * model spec, the parameters with values and standard errors, and the validity range `range_nm`.
 */
export interface StoredFitReport {
  model: string;
  parameters: Record<string, { value: number; stderr?: number | null; unit?: string }>;
  range_nm: [number, number];
}

/** A Kramers-Kronig report as stored: KkReport (src/kk/check.ts), plain JSON. */
export interface StoredKkReport {
  verdict: string;
}

/** The immutable content of a version: the normalized table and/or a fitted model, and the KK report. */
export interface VersionContent {
  table: NkTable | null;
  fit: StoredFitReport | null;
  kk: StoredKkReport | null;
}

/** Structured provenance of a version; every field may be null (unknown). */
export interface Provenance {
  sample: string | null;
  substrate: string | null;
  /** Process or recipe that made the film. */
  process: string | null;
  instrument: string | null;
  method: MeasurementMethod | null;
  /** Angles of incidence in degrees. */
  angles_deg: number[] | null;
  /** Measurement date, YYYY-MM-DD. */
  measured_on: string | null;
  operator: string | null;
  /** Name of the imported file (no directories). */
  source_file: string | null;
  /** SHA-256 of the imported file's bytes. */
  source_sha256: string | null;
  /** Free notes. */
  notes: string | null;
  /**
   * Lines the instrument wrote above the table's header (sample, operator, angles …), verbatim. Taken from
   * the file, not given by a person; absent (not null) when the file had none, so versions stored before
   * the field existed keep their hashes.
   */
  preamble?: string[];
  /** Columns the file did not have, e.g. ["k"] for an n-only table (k stored as 0 but not measured); absent when none. */
  absent_columns?: string[];
}

export const PROVENANCE_FIELDS = [
  'sample',
  'substrate',
  'process',
  'instrument',
  'method',
  'angles_deg',
  'measured_on',
  'operator',
  'source_file',
  'source_sha256',
  'notes',
] as const satisfies readonly (keyof Provenance)[];

/** Provenance taken from the imported file itself (never typed by a person), present only when there is something to say. */
export const FILE_PROVENANCE_FIELDS = ['preamble', 'absent_columns'] as const satisfies readonly (keyof Provenance)[];

/** A material as listed. */
export interface MaterialRecord {
  slug: string;
  name: string;
  description: string;
  tags: string[];
  created_by: string;
  created_at: string;
  /** Number of versions ever created. */
  versions: number;
  /** Newest approved (not retired) version number, or null. */
  latest_approved: number | null;
}

/** A version's record without its content (lists, history, results of writes). */
export interface VersionRecord {
  /** The pin: `slug@N`. */
  ref: string;
  slug: string;
  version: number;
  status: VersionStatus;
  sha256: string;
  /** What the content holds: a table, a model (its spec), a KK verdict. */
  has_table: boolean;
  model: string | null;
  kk_verdict: string | null;
  /** Where the version may be evaluated: the model's validity range, else the table's measured range, in nm. */
  range_nm: [number, number];
  provenance: Provenance;
  created_by: string;
  created_at: string;
  approved_by: string | null;
  approved_at: string | null;
  /** True when the creator approved it under the `allow_self_approval` setting. */
  self_approved: boolean;
  retired_by: string | null;
  retired_at: string | null;
  retire_reason: string | null;
  withdrawn_by: string | null;
  withdrawn_at: string | null;
  withdraw_reason: string | null;
}

/** A version with its content; `notices` and `warnings` come from resolving the reference. */
export interface VersionDetail extends VersionRecord {
  content: VersionContent;
  notices: string[];
  warnings: string[];
}

/** One line of the audit log. */
export interface AuditEntry {
  id: number;
  at: string;
  actor: string;
  action: string;
  ref: string | null;
  detail: Record<string, unknown>;
}
