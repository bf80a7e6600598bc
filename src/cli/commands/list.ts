/** `nkledger list`: every material with its version count and latest approved version. */
import type { Command } from 'commander';
import { listMaterials } from '../../service/materials.ts';
import { addDbOption, withRegistry } from '../admin-options.ts';
import { guarded } from '../failure.ts';
import { formatTable, printJson, printLines } from '../output.ts';

export function register(program: Command): void {
  addDbOption(program.command('list'))
    .description('list the materials in the registry')
    .option('--tag <tag>', 'only materials with this tag')
    .option('--json', 'print [{"slug", "name", "tags", "versions", "latest_approved", ...}] as JSON')
    .addHelpText('after', '\nExample:\n  nkledger list --tag nitride')
    .action(
      guarded(async (opts: { db?: string; tag?: string; json?: boolean }) => {
        const list = await withRegistry(opts, (r) => listMaterials(r, { tag: opts.tag }));
        if (opts.json) return printJson(list);
        if (list.length === 0) return printLines(['no materials yet (nkledger material add SLUG --name ...)']);
        const rows = list.map((m) => [m.slug, m.name, String(m.versions), m.latest_approved === null ? '-' : `@${m.latest_approved}`, m.tags.join(',')]);
        printLines(formatTable(['slug', 'name', 'versions', 'approved', 'tags'], rows));
      }),
    );
}
