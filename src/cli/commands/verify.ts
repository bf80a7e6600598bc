/** `nkledger verify`: recompute every stored hash; name each version whose content no longer matches. */
import type { Command } from 'commander';
import { verifyRegistry } from '../../service/registry-admin.ts';
import { addDbOption, withRegistry } from '../admin-options.ts';
import { guarded } from '../failure.ts';
import { cliIo, setExitCode } from '../io.ts';
import { printJson, printLines } from '../output.ts';
import { CHECK_FAILED_EXIT } from './lock.ts';

export function register(program: Command): void {
  addDbOption(program.command('verify'))
    .description(`recompute the SHA-256 of every version and check numbering and the immutability triggers (exit ${CHECK_FAILED_EXIT} on any problem)`)
    .option('--json', 'print {"ok", "checked_versions", "mismatches", "missing_versions", "missing_triggers"} as JSON')
    .addHelpText('after', '\nExample:\n  nkledger verify --db /srv/nkledger/lab.db')
    .action(
      guarded(async (opts: { db?: string; json?: boolean }) => {
        const report = await withRegistry(opts, verifyRegistry);
        if (!report.ok) setExitCode(CHECK_FAILED_EXIT);
        if (opts.json) return printJson(report);
        const problems = [
          ...report.mismatches.map((m) => `${m.ref}: ${m.reason} (stored ${m.stored_sha256.slice(0, 12)}…, computed ${m.computed_sha256?.slice(0, 12) ?? 'none'}…)`),
          ...report.missing_versions.map((ref) => `${ref}: the version was assigned but its row is gone`),
          ...report.missing_triggers.map((t) => `trigger ${t} is missing: the database no longer refuses edits by itself`),
        ];
        for (const p of problems) cliIo().stderr.write(`FAIL  ${p}\n`);
        printLines([report.ok ? `registry ok: ${report.checked_versions} versions, every hash matches` : `registry FAILED verification: ${problems.length} problem(s) in ${report.checked_versions} versions`]);
      }),
    );
}
