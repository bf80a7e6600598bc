/** `nkledger history SLUG`: a material's versions and its audit log (who did what, when). */
import type { Command } from 'commander';
import { addRegistryOptions, registryOps, type RegistryFlags } from '../registry-access.ts';
import { guarded } from '../failure.ts';
import { formatTable, printJson, printLines } from '../output.ts';
import { shortTime } from '../registry-output.ts';

/** The reason an audit event records: a retirement's or withdrawal's, or the one given for accepting review warnings. */
function auditNote(detail: Record<string, unknown>): string {
  if (detail.reason) return `  (${detail.reason})`;
  const accepted = detail.accepted_warnings as { reason: string; findings: string[] } | undefined;
  return accepted ? `  (accepted ${accepted.findings.join(', ') || 'warnings'}: ${accepted.reason})` : '';
}

export function register(program: Command): void {
  addRegistryOptions(program.command('history'))
    .description("a material's versions and its audit log")
    .argument('<slug>', 'material slug')
    .option('--json', 'print {"material", "versions", "audit"} as JSON')
    .addHelpText('after', '\nExample:\n  nkledger history sin-pecvd-a')
    .action(
      guarded(async (slug: string, opts: RegistryFlags & { json?: boolean }) => {
        const h = await registryOps(opts).history(slug);
        if (opts.json) return printJson(h);
        const versions = h.versions.map((v) => [
          v.ref,
          v.status,
          v.sha256.slice(0, 12),
          v.model ?? (v.has_table ? 'table' : ''),
          v.created_by,
          v.approved_by ?? '',
        ]);
        // Columns as wide as their longest entry, so a long user name never runs into the action.
        const cells = h.audit.map((a) => [shortTime(a.at), a.actor, a.action, `${a.ref ?? ''}${auditNote(a.detail)}`]);
        const widths = [0, 1, 2].map((i) => Math.max(0, ...cells.map((c) => c[i].length)));
        const audit = cells.map((c) =>
          c
            .map((cell, i) => (i < 3 ? cell.padEnd(widths[i]) : cell))
            .join('  ')
            .trimEnd(),
        );
        printLines([
          `${h.material.slug}: ${h.material.name}`,
          ...(versions.length ? formatTable(['version', 'status', 'sha256', 'content', 'created by', 'approved by'], versions) : ['no versions yet']),
          '',
          'audit log:',
          ...audit,
        ]);
      }),
    );
}
