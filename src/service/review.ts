/**
 * What a reviewer must see before approving a version, read from the stored record (never re-fitted):
 * the Kramers-Kronig verdict and its misfit, whether the fit converged and its diagnostics, the strongly
 * correlated parameter pairs, and a provenance summary. `reviewVersion` gives it for one version,
 * `reviewQueue` for every draft a user may approve; `approve` (lifecycle.ts) shows it and refuses a version
 * with blocking findings unless the approver accepts them with a reason.
 */
import type { FitDiagnostic, FitReport } from '../fit/types.ts';
import type { KkReport } from '../kk/check.ts';
import type { Registry } from '../registry/open.ts';
import { verifiedContentOf, type MaterialRow, type VersionRow } from '../registry/records.ts';
import { formatRef } from '../registry/refs.ts';
import type { TokenRole } from '../registry/schema-auth.ts';
import type { VersionContent, VersionStatus } from '../registry/types.ts';
import { eq } from 'drizzle-orm';
import { binaryOrder } from '../registry/sql.ts';
import { sameUser } from './actor.ts';
import { readSettings } from './settings.ts';
import { roleAllows } from './tokens.ts';
import { resolveRow } from './versions.ts';

/**
 * Parameter pairs with |r| at or above this are shown to a reviewer as strongly correlated: their individual
 * values are poorly determined (the fit report flags |r| > 0.95 the same way; common practice).
 */
export const STRONG_CORRELATION = 0.95;

/** The KK verdict as a reviewer reads it: the check's verdict, or `not-run` when the version has no KK report. */
export type ReviewKkVerdict = 'consistent' | 'inconsistent' | 'uninformative' | 'not-run';

/** A finding that blocks approval unless the approver accepts it with a reason (data, worded by each front door). */
export interface BlockingFinding {
  /** `kk-inconsistent` or `fit-not-converged`. */
  rule: string;
  /** Where in the stored content the finding comes from, e.g. `content.kk.verdict`. */
  field: string;
  value: string;
  message: string;
}

export interface ReviewSummary {
  ref: string;
  status: VersionStatus;
  sha256: string;
  kk: {
    verdict: ReviewKkVerdict;
    /** The check's own one-sentence summary (null when not run). */
    summary: string | null;
    /** The misfit in n between the data and the KK-consistent representation (null when not run). */
    misfit: { tolerance: number | null; rms_dn: number; max_dn: number | null; systematic_max_dn: number | null; worst_nm: number | null } | null;
  };
  /** Null for a table-only version. */
  fit: {
    model: string;
    converged: boolean;
    iterations: number | null;
    rms_n: number | null;
    rms_k: number | null;
    reduced_chi2: number | null;
    /** The fit's warnings as data: rule, parameters, value, advice. */
    diagnostics: FitDiagnostic[];
  } | null;
  correlations: { threshold: number; pairs: { a: string; b: string; r: number }[] };
  provenance: {
    sample: string | null;
    instrument: string | null;
    method: string | null;
    measured_on: string | null;
    operator: string | null;
    source_file: string | null;
    source_sha256: string | null;
    created_by: string;
    created_at: string;
  };
  /** What must be accepted with a reason before approval (empty: nothing blocks). */
  blocking: BlockingFinding[];
}

const NOT_CONVERGED = 'not-converged';

/** The stored fit's diagnostics; reports stored before diagnostics existed carry only their sentences. */
function diagnosticsOf(fit: Partial<FitReport>): FitDiagnostic[] {
  if (Array.isArray(fit.diagnostics)) return fit.diagnostics;
  return (fit.warnings ?? []).map((message) => ({
    rule: /without meeting the convergence tests/.test(message) ? NOT_CONVERGED : 'warning',
    message,
  }));
}

/** Pairs of free parameters with |r| ≥ STRONG_CORRELATION, from the stored correlation matrix. */
function strongPairs(fit: Partial<FitReport>): { a: string; b: string; r: number }[] {
  const c = fit.correlations;
  if (!c) return [];
  if (!Array.isArray(c.matrix) || !Array.isArray(c.parameters)) return (c.high ?? []).filter((h) => Math.abs(h.r) >= STRONG_CORRELATION);
  const pairs: { a: string; b: string; r: number }[] = [];
  for (let i = 0; i < c.parameters.length; i++) {
    for (let j = i + 1; j < c.parameters.length; j++) {
      const r = c.matrix[i]?.[j];
      if (typeof r === 'number' && Math.abs(r) >= STRONG_CORRELATION) pairs.push({ a: c.parameters[i], b: c.parameters[j], r });
    }
  }
  return pairs;
}

/** The review summary of a stored version (pure: the row and its verified content). */
export function reviewOf(slug: string, row: VersionRow, content: VersionContent): ReviewSummary {
  const ref = formatRef(slug, row.number);
  const kk = content.kk as Partial<KkReport> | null;
  const fit = content.fit as Partial<FitReport> | null;
  const verdict = (kk?.verdict ?? 'not-run') as ReviewKkVerdict;
  const diagnostics = fit ? diagnosticsOf(fit) : [];
  const converged = !diagnostics.some((d) => d.rule === NOT_CONVERGED);
  const blocking: BlockingFinding[] = [];
  if (verdict === 'inconsistent') {
    blocking.push({
      rule: 'kk-inconsistent',
      field: 'content.kk.verdict',
      value: 'inconsistent',
      message: 'the Kramers-Kronig check found n and k inconsistent',
    });
  }
  if (fit && !converged) {
    blocking.push({
      rule: 'fit-not-converged',
      field: 'content.fit.diagnostics',
      value: NOT_CONVERGED,
      message: `the ${fit.model} fit did not converge: the stored parameters may not be a minimum`,
    });
  }
  return {
    ref,
    status: row.status,
    sha256: row.sha256,
    kk: {
      verdict,
      summary: kk?.summary ?? null,
      misfit:
        kk && typeof kk.rms_dn === 'number'
          ? {
              tolerance: kk.tolerance ?? null,
              rms_dn: kk.rms_dn,
              max_dn: kk.max_dn ?? null,
              systematic_max_dn: kk.systematic_max_dn ?? null,
              worst_nm: kk.worst_nm ?? null,
            }
          : null,
    },
    fit: fit
      ? {
          model: fit.model ?? 'unknown',
          converged,
          iterations: fit.statistics?.iterations ?? null,
          rms_n: fit.statistics?.rms_n ?? null,
          rms_k: fit.statistics?.rms_k ?? null,
          reduced_chi2: fit.statistics?.reduced_chi2 ?? null,
          diagnostics,
        }
      : null,
    correlations: { threshold: STRONG_CORRELATION, pairs: fit ? strongPairs(fit) : [] },
    provenance: {
      sample: row.sample,
      instrument: row.instrument,
      method: row.method,
      measured_on: row.measuredOn,
      operator: row.operator,
      source_file: row.sourceFile,
      source_sha256: row.sourceSha256,
      created_by: row.createdBy,
      created_at: row.createdAt,
    },
    blocking,
  };
}

/** The review summary of one version (any status): what `approve` shows, read from the stored record. */
export async function reviewVersion(registry: Registry, ref: string): Promise<ReviewSummary> {
  const { material, row, resolved } = await resolveRow(registry, ref);
  return reviewOf(material.slug, row, verifiedContentOf(row, resolved.ref));
}

/** Who asks for the review list: a user name and, through the API, the token's role (null: the CLI on a file, no roles). */
export interface Reviewer {
  user: string;
  role: TokenRole | null;
}

/** One draft a reviewer may approve. */
export interface ReviewQueueEntry extends ReviewSummary {
  /** True when the reviewer created it and `allow_self_approval` lets them approve it anyway. */
  self: boolean;
}

export interface ReviewQueue {
  user: string;
  /** False when the reviewer's role cannot approve; `drafts` is then empty and `reason` says why. */
  may_approve: boolean;
  reason: string | null;
  /** Drafts created by the reviewer and left out under the two-person rule. */
  own_drafts: number;
  drafts: ReviewQueueEntry[];
}

/**
 * The drafts `reviewer` may approve, oldest first, each with its review summary: not their own (two-person rule,
 * unless `allow_self_approval` is on) and only when their role allows approval.
 */
export async function reviewQueue(registry: Registry, reviewer: Reviewer): Promise<ReviewQueue> {
  const { materials, materialVersions } = registry.tables;
  if (reviewer.role !== null && !roleAllows(reviewer.role, 'approver')) {
    return {
      user: reviewer.user,
      may_approve: false,
      reason: `role ${reviewer.role} cannot approve; approval needs role approver or admin`,
      own_drafts: 0,
      drafts: [],
    };
  }
  const selfAllowed = (await readSettings(registry)).allow_self_approval;
  const rows = (await registry.db
    .select({ material: materials, row: materialVersions })
    .from(materialVersions)
    .innerJoin(materials, eq(materials.id, materialVersions.materialId))
    .where(eq(materialVersions.status, 'draft'))
    .orderBy(materialVersions.createdAt, binaryOrder(registry, materials.slug), materialVersions.number)) as {
    material: MaterialRow;
    row: VersionRow;
  }[];

  const drafts: ReviewQueueEntry[] = [];
  let own = 0;
  for (const { material, row } of rows) {
    const self = sameUser(row.createdBy, reviewer.user);
    if (self && !selfAllowed) {
      own++;
      continue;
    }
    const ref = formatRef(material.slug, row.number);
    drafts.push({ ...reviewOf(material.slug, row, verifiedContentOf(row, ref)), self });
  }
  return { user: reviewer.user, may_approve: true, reason: null, own_drafts: own, drafts };
}
