/**
 * The lifecycle of a version: approve (two-person rule), retire (with a reason), withdraw (a draft).
 * Each is one BEGIN IMMEDIATE transaction that re-reads the version, changes its status and appends
 * the audit row; the triggers of drizzle/0001_immutability.sql refuse any other transition.
 */
import { and, eq } from 'drizzle-orm';
import { ConflictError, InputError } from '../errors.ts';
import type { Registry } from '../registry/open.ts';
import { appendAudit, nowIso, verifiedContentOf, versionRecord, writeTransaction, type VersionRow } from '../registry/records.ts';
import { formatRef } from '../registry/refs.ts';
import type { VersionRecord, VersionStatus } from '../registry/types.ts';
import { checkActor, sameUser } from './actor.ts';
import { reviewOf, type ReviewSummary } from './review.ts';
import { readSettings } from './settings.ts';
import { resolveRow } from './versions.ts';

/** Re-read a version inside the write transaction and insist on its current status. */
async function lockedVersion(registry: Registry, ref: string, expected: VersionStatus, verb: 'approve' | 'retire' | 'withdraw') {
  const { material, row } = await resolveRow(registry, ref);
  if (row.status !== expected) {
    const done = { approve: 'approved', retire: 'retired', withdraw: 'withdrawn' }[verb];
    throw new ConflictError(
      `cannot ${verb} ${material.slug}@${row.number}: it is ${row.status}, and only ${expected === 'approved' ? 'an' : 'a'} ${expected} version can be ${done}`,
      `version-not-${expected}`,
    );
  }
  return { material, row };
}

async function transition(registry: Registry, row: VersionRow, from: VersionStatus, set: Partial<VersionRow>): Promise<VersionRow> {
  const { materialVersions } = registry.tables;
  const [updated] = await registry.db
    .update(materialVersions)
    .set(set)
    .where(and(eq(materialVersions.id, row.id), eq(materialVersions.status, from)))
    .returning();
  if (!updated) throw new ConflictError(`version changed status while being updated; try again`, 'version-changed');
  return updated;
}

/** What `approve` may be given besides the ref: the reason for approving despite blocking review findings. */
export interface ApproveOptions {
  /** Why the approver accepts a KK-inconsistent or unconverged version; recorded in the hashed audit event. */
  acceptWarnings?: string;
}

/** An approved version with the review summary the approver was shown and the findings they accepted. */
export interface ApprovalResult extends VersionRecord {
  review: ReviewSummary;
  /** Null when nothing was accepted; else the reason and the rules of the blocking findings it covered. */
  accepted_warnings: { reason: string; findings: string[] } | null;
}

/** Rule of an approval refused for blocking review findings not accepted with a reason. */
export const UNACCEPTED_WARNINGS = 'approval-warnings-unaccepted';

/**
 * Approve a draft. The approver must not be its creator unless `allow_self_approval` is on;
 * then the version records `self_approved: true`. A version whose KK check is inconsistent or whose fit
 * did not converge (review.ts `blocking`) is refused unless `acceptWarnings` gives a reason, which goes
 * into the audit event (part of its hashed document). The refusal carries the review summary.
 */
export async function approve(registry: Registry, ref: string, actor: string, options: ApproveOptions = {}): Promise<ApprovalResult> {
  const who = checkActor(actor);
  const reason =
    options.acceptWarnings === undefined ? null : requireReason(options.acceptWarnings, 'approve it despite its warnings', 'accept_warnings');
  return writeTransaction(registry, async () => {
    const { material, row } = await lockedVersion(registry, ref, 'draft', 'approve');
    const self = sameUser(row.createdBy, who);
    if (self && !(await readSettings(registry)).allow_self_approval) {
      throw new ConflictError(
        `${who === row.createdBy ? who : `${who} (the same user as ${row.createdBy})`} created ${material.slug}@${row.number} and cannot also approve it: someone else must (a one-person lab may allow self-approval: setting allow_self_approval)`,
        'two-person-rule',
      );
    }
    const review = reviewOf(material.slug, row, verifiedContentOf(row, formatRef(material.slug, row.number)));
    if (review.blocking.length > 0 && reason === null) {
      const first = review.blocking[0];
      throw new InputError(
        UNACCEPTED_WARNINGS,
        `${review.ref} was not approved: ${review.blocking.map((b) => b.message).join('; ')}; to approve it anyway after reviewing it, give the reason`,
        { field: first.field },
        {
          option: 'accept_warnings',
          value: first.value,
          remedies: [{ option: 'accept_warnings', value: 'REASON' }],
          extensions: { blocking: review.blocking, review },
        },
      );
    }
    const accepted = reason === null ? null : { reason, findings: review.blocking.map((b) => b.rule) };
    const updated = await transition(registry, row, 'draft', { status: 'approved', approvedBy: who, approvedAt: nowIso(), selfApproved: self });
    await appendAudit(registry, {
      actor: who,
      action: 'version.approve',
      materialId: material.id,
      versionId: row.id,
      ...versionEvent(material.slug, row, 'approved'),
      detail: { ref: `${material.slug}@${row.number}`, sha256: row.sha256, self_approved: self, ...(accepted && { accepted_warnings: accepted }) },
    });
    return { ...versionRecord(material.slug, updated), review, accepted_warnings: accepted };
  });
}

/** The chain fields of a status change (src/registry/chain.ts): which version, its content hash, from → to. */
function versionEvent(slug: string, row: VersionRow, to: VersionStatus) {
  return { material: slug, version: row.number, contentSha256: row.sha256, status: { from: row.status, to } };
}

function requireReason(reason: string | undefined, verb: string, option = 'reason'): string {
  const text = (reason ?? '').trim();
  if (text === '')
    throw new InputError(
      'reason-required',
      `say why you ${verb}`,
      { field: option },
      {
        option,
        value: reason ?? '',
        remedies: [{ option, value: 'TEXT' }],
      },
    );
  if (text.length > 2000) throw new InputError('reason-too-long', 'the reason is longer than 2000 characters', { field: option }, { option });
  return text;
}

/** Retire an approved version. It still resolves (pins never break) but warns wherever used. */
export async function retire(registry: Registry, ref: string, reason: string, actor: string): Promise<VersionRecord> {
  const who = checkActor(actor);
  const why = requireReason(reason, 'retire it');
  return writeTransaction(registry, async () => {
    const { material, row } = await lockedVersion(registry, ref, 'approved', 'retire');
    const updated = await transition(registry, row, 'approved', { status: 'retired', retiredBy: who, retiredAt: nowIso(), retireReason: why });
    await appendAudit(registry, {
      actor: who,
      action: 'version.retire',
      materialId: material.id,
      versionId: row.id,
      ...versionEvent(material.slug, row, 'retired'),
      detail: { ref: `${material.slug}@${row.number}`, reason: why },
    });
    return versionRecord(material.slug, updated);
  });
}

/** Withdraw a draft nobody should use (it is kept, never deleted). The reason is optional. */
export async function withdraw(registry: Registry, ref: string, actor: string, reason?: string): Promise<VersionRecord> {
  const who = checkActor(actor);
  const why = reason === undefined || reason.trim() === '' ? null : requireReason(reason, 'withdraw it');
  return writeTransaction(registry, async () => {
    const { material, row } = await lockedVersion(registry, ref, 'draft', 'withdraw');
    const updated = await transition(registry, row, 'draft', { status: 'withdrawn', withdrawnBy: who, withdrawnAt: nowIso(), withdrawReason: why });
    await appendAudit(registry, {
      actor: who,
      action: 'version.withdraw',
      materialId: material.id,
      versionId: row.id,
      ...versionEvent(material.slug, row, 'withdrawn'),
      detail: { ref: `${material.slug}@${row.number}`, reason: why },
    });
    return versionRecord(material.slug, updated);
  });
}
