/** `nkledger list`: every material with its version count and latest approved version. */
import type { Command } from 'commander';
import { addRegistryOptions, registryOps, type RegistryFlags } from '../registry-access.ts';
import { guarded } from '../failure.ts';
import { formatTable, printJson, printLines } from '../output.ts';

export function register(program: Command): void {
  addRegistryOptions(program.command('list'))
    .description('list the materials in the registry')
    .option('--tag <tag>', 'only materials with this tag')
    .option('--search <text>', "only materials whose slug, name, description or tags contain every word of TEXT (case-insensitive; the API's q)")
    .option('--json', 'print [{"slug", "name", "tags", "versions", "latest_approved", ...}] as JSON')
    .addHelpText('after', '\nExamples:\n  nkledger list --tag nitride\n  nkledger list --search "silicon nitride"')
    .action(
      guarded(async (opts: RegistryFlags & { tag?: string; search?: string; json?: boolean }) => {
        const list = (await registryOps(opts).materials(opts.search)).filter((m) => opts.tag === undefined || m.tags.includes(opts.tag));
        if (opts.json) return printJson(list);
        if (list.length === 0)
          return printLines([
            opts.search !== undefined || opts.tag !== undefined ? 'no material matches' : 'no materials yet (nkledger material add SLUG --name ...)',
          ]);
        const rows = list.map((m) => [
          m.slug,
          m.name,
          String(m.versions),
          m.latest_approved === null ? '-' : `@${m.latest_approved}`,
          m.tags.join(','),
        ]);
        printLines(formatTable(['slug', 'name', 'versions', 'approved', 'tags'], rows));
      }),
    );
}
