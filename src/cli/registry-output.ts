/** Text rendering shared by the registry commands (show, list, history, import, approve, …). */
import type { VersionRecord } from '../registry/types.ts';
import { cliIo } from './io.ts';
import { printLines } from './output.ts';

/** Notices (e.g. "a bare slug is not a pin") and warnings (retired, draft) go to stderr, so stdout stays data. */
export function printResolution(resolution: { notices?: string[]; warnings?: string[] }): void {
  for (const n of resolution.notices ?? []) cliIo().stderr.write(`note: ${n}\n`);
  for (const w of resolution.warnings ?? []) cliIo().stderr.write(`warning: ${w}\n`);
}

/** "2024-05-01 09:30 UTC" from an ISO timestamp. */
export function shortTime(iso: string | null): string {
  return iso === null ? '' : `${iso.slice(0, 10)} ${iso.slice(11, 16)} UTC`;
}

/** What a version holds, in a few words: "table 401 pts, model tauc-lorentz, KK consistent". */
export function contentSummary(v: VersionRecord): string {
  const parts: string[] = [];
  if (v.has_table) parts.push('table');
  if (v.model) parts.push(`model ${v.model}`);
  if (v.kk_verdict) parts.push(`KK ${v.kk_verdict}`);
  return `${parts.join(', ')}; ${v.range_nm[0]}–${v.range_nm[1]} nm`;
}

/** The lifecycle of a version as lines: created, approved, retired, withdrawn. */
export function lifecycleLines(v: VersionRecord): string[] {
  const lines = [`created    ${shortTime(v.created_at)} by ${v.created_by}`];
  if (v.approved_by)
    lines.push(
      `approved   ${shortTime(v.approved_at)} by ${v.approved_by}${v.self_approved ? ' (self-approval, allowed by the registry setting)' : ''}`,
    );
  if (v.retired_by) lines.push(`retired    ${shortTime(v.retired_at)} by ${v.retired_by}: ${v.retire_reason}`);
  if (v.withdrawn_by) lines.push(`withdrawn  ${shortTime(v.withdrawn_at)} by ${v.withdrawn_by}${v.withdraw_reason ? `: ${v.withdraw_reason}` : ''}`);
  return lines;
}

/** One-paragraph description of a version after a write (approve, retire, withdraw). */
export function printVersionBrief(v: VersionRecord): void {
  printLines([`${v.ref}  ${v.status}  sha256:${v.sha256}`, ...lifecycleLines(v).map((l) => `  ${l}`)]);
}
