/** `nkledger backup FILE`: a consistent copy of the live registry (SQLite online backup). */
import type { Command } from 'commander';
import { addRegistryOptions, registryOps, type RegistryFlags } from '../registry-access.ts';
import { guarded } from '../failure.ts';
import { printJson, printLines } from '../output.ts';

export function register(program: Command): void {
  addRegistryOptions(program.command('backup'))
    .description(
      "copy the registry to a new file while it stays in use (SQLite online backup; never overwrites); a PostgreSQL registry is backed up with the database's own tools (pg_dump, base backups)",
    )
    .argument('<file>', 'the backup file to create')
    .option('--json', 'print {"path", "pages"} as JSON')
    .addHelpText('after', '\nExample:\n  nkledger backup backups/nkledger-2024-05-01.db')
    .action(
      guarded(async (file: string, opts: RegistryFlags & { json?: boolean }) => {
        const result = await registryOps(opts).backup(file);
        if (opts.json) return printJson(result);
        printLines([`backed up to ${result.path} (${result.pages} pages); check it with: nkledger verify --db ${result.path}`]);
      }),
    );
}
