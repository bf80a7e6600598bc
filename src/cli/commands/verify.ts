/** `nkledger verify`: recompute every stored hash; name each version whose content no longer matches. */
import type { Command } from 'commander';
import { addRegistryOptions, registryOps, type RegistryFlags } from '../registry-access.ts';
import { ENVIRONMENT_FAULT_EXIT, guarded } from '../failure.ts';
import { printJson, printLines } from '../output.ts';
import { CHECK_FAILED_EXIT } from './lock.ts';
import { cliIo, setExitCode } from '../io.ts';
import { verifyProblems } from '../verify-output.ts';

export function register(program: Command): void {
  addRegistryOptions(program.command('verify'))
    .description(
      `check the registry: SQLite's integrity check, every version's SHA-256 recomputed, numbering, the triggers by their SQL (on PostgreSQL: by their definitions in the catalogue, and whether they are enabled), the audit hash chain, and every version's status and approver against it (exit ${CHECK_FAILED_EXIT} on any problem, ${ENVIRONMENT_FAULT_EXIT} when the database cannot be read)`,
    )
    .option(
      '--json',
      'print {"ok", "backend", "checked_versions", "chain": {"head"}, "mismatches", "state_mismatches", "not_applicable", ...} as JSON',
    )
    .addHelpText('after', '\nExample:\n  nkledger verify --db /srv/nkledger/lab.db')
    .action(
      guarded(async (opts: RegistryFlags & { json?: boolean }) => {
        const report = await registryOps(opts).verify();
        if (!report.ok) setExitCode(CHECK_FAILED_EXIT);
        if (opts.json) return printJson(report);
        const problems = verifyProblems(report);
        for (const p of problems) cliIo().stderr.write(`FAIL  ${p}\n`);
        for (const n of report.not_applicable) cliIo().stderr.write(`n/a   ${n.check} (not on PostgreSQL): ${n.reason}\n`);
        const head = report.chain.head ? `; audit chain head ${report.chain.head.hash} (event ${report.chain.head.sequence})` : '';
        printLines([
          report.ok
            ? `registry ok: ${report.checked_versions} versions, every hash matches its content and the audit chain${head}`
            : `registry FAILED verification: ${problems.length} problem(s) in ${report.checked_versions} versions${head}`,
        ]);
      }),
    );
}
