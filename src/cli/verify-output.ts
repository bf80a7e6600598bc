/** The problems of a verify report as lines, as `nkledger verify` and `nkledger registry copy` print them after FAIL. */
import type { VerifyReport } from '../service/registry-admin.ts';

export function verifyProblems(report: VerifyReport): string[] {
  return [
    ...report.mismatches.map(
      (m) => `${m.ref}: ${m.reason} (stored ${m.stored_sha256.slice(0, 12)}…, computed ${m.computed_sha256?.slice(0, 12) ?? 'none'}…)`,
    ),
    ...report.missing_versions.map((ref) => `${ref}: the version was assigned but its row is gone`),
    ...report.missing_triggers.map((t) => `trigger ${t} is missing: the database no longer refuses edits by itself`),
    ...report.altered_triggers.map((t) => `trigger ${t} was replaced by one with other SQL: it may no longer refuse anything`),
    ...report.unexpected_triggers.map((t) => `trigger ${t} was not created by nkledger`),
    ...report.disabled_triggers.map((t) => `trigger ${t} is disabled: it no longer refuses anything`),
    ...report.chain.problems.map((p) => `audit chain: ${p}`),
    ...report.state_mismatches.map((m) => m.problem),
    ...report.integrity.map((line) => `integrity_check: ${line}`),
  ];
}
