/** `nkledger lock add|verify|outdated --lock FILE`: a design's lockfile of pinned material versions. */
import type { Command } from 'commander';
import { readLockfile, writeLockfile } from '../../service/lock.ts';
import { addRegistryOptions, registryOps, type RegistryFlags } from '../registry-access.ts';
import { guarded } from '../failure.ts';
import { cliIo, setExitCode } from '../io.ts';
import { formatTable, printJson, printLines } from '../output.ts';
import { printResolution } from '../registry-output.ts';

/** Exit code of a check that ran but did not pass (verify, lock verify): distinct from bad input (2). */
export const CHECK_FAILED_EXIT = 3;

export function register(program: Command): void {
  const lock = program.command('lock').description("a design's lockfile: the exact version and content hash of every material it uses");

  addRegistryOptions(lock.command('add'))
    .description(
      "pin a version in the lockfile (created if missing; replaces another version of the same material) and record the registry's audit-chain head",
    )
    .argument('<ref>', 'slug@N, slug@sha256:PREFIX or a bare slug (pins its latest approved version)')
    .requiredOption('--lock <file>', 'lockfile path, e.g. design.nklock.json')
    .option('--json', 'print {"ref", "sha256", "replaced", "registry_head"} as JSON')
    .addHelpText('after', '\nExample:\n  nkledger lock add sin-pecvd-a@3 --lock filter.nklock.json')
    .action(
      guarded(async (ref: string, opts: RegistryFlags & { lock: string; json?: boolean }) => {
        const current = readLockfile(opts.lock, { allowMissing: true });
        const result = await registryOps(opts).lockAdd(current, ref);
        writeLockfile(opts.lock, result.lock);
        printResolution(result);
        if (opts.json)
          return printJson({
            ref: result.ref,
            sha256: result.entry.sha256,
            replaced: result.replaced,
            registry_head: result.lock.registry_head ?? null,
          });
        printLines([`pinned ${result.ref} sha256:${result.entry.sha256} in ${opts.lock}`]);
      }),
    );

  addRegistryOptions(lock.command('verify'))
    .description(
      `check every entry's content still hashes to the locked SHA-256 (recomputed from the content) and that the registry's history still contains the audit-chain head the lockfile recorded (exit 0), else name each problem (exit ${CHECK_FAILED_EXIT})`,
    )
    .requiredOption('--lock <file>', 'lockfile path')
    .option('--strict', 'retired, draft and withdrawn versions fail too (otherwise they are warnings)')
    .option('--json', 'print {"ok", "entries": [{"ref", "outcome", "message", ...}], "history": {"outcome", "message", ...}, ...} as JSON')
    .addHelpText('after', '\nExample:\n  nkledger lock verify --lock filter.nklock.json --strict')
    .action(
      guarded(async (opts: RegistryFlags & { lock: string; strict?: boolean; json?: boolean }) => {
        const lockfile = readLockfile(opts.lock);
        const report = await registryOps(opts).lockVerify(lockfile, { strict: opts.strict });
        if (!report.ok) setExitCode(CHECK_FAILED_EXIT);
        if (opts.json) return printJson(report);
        // Every entry's line goes to stdout (so `lock verify > report` keeps which entry failed); the summary to stderr.
        const h = report.history;
        printLines([
          ...report.entries.map((e) => `${e.failed ? 'FAIL' : e.outcome === 'ok' ? 'ok  ' : 'warn'}  ${e.message}`),
          `${h.failed ? 'FAIL' : h.outcome === 'ok' ? 'ok  ' : 'warn'}  ${h.message}`,
        ]);
        cliIo().stderr.write(
          `${report.ok ? `lockfile ok: ${report.entries.length} entries${report.warnings ? `, ${report.warnings} warning(s)` : ''}` : `lockfile FAILED: ${report.failures} of ${report.entries.length} entries`}\n`,
        );
      }),
    );

  addRegistryOptions(lock.command('outdated'))
    .description('list locked materials that have newer approved versions')
    .requiredOption('--lock <file>', 'lockfile path')
    .option('--json', 'print [{"ref", "locked_version", "newer_approved", "latest_approved"}] as JSON')
    .option('--check', `exit ${CHECK_FAILED_EXIT} when any locked material is outdated (0 otherwise), for CI`)
    .addHelpText(
      'after',
      '\nExamples:\n  nkledger lock outdated --lock filter.nklock.json\n  nkledger lock outdated --lock filter.nklock.json --check',
    )
    .action(
      guarded(async (opts: RegistryFlags & { lock: string; json?: boolean; check?: boolean }) => {
        const lockfile = readLockfile(opts.lock);
        const outdated = await registryOps(opts).lockOutdated(lockfile);
        if (opts.check && outdated.length > 0) setExitCode(CHECK_FAILED_EXIT);
        if (opts.json) return printJson(outdated);
        if (outdated.length === 0) return printLines(['every locked material is at its latest approved version']);
        printLines(
          formatTable(
            ['locked', 'newer approved', 'latest'],
            outdated.map((o) => [o.ref, o.newer_approved.map((n) => `@${n}`).join(' '), `${o.slug}@${o.latest_approved}`]),
          ),
        );
      }),
    );
}
