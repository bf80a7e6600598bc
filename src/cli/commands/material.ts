/** `nkledger material add|edit SLUG`: create a material in the registry (versions come from `import`) or edit its description fields. */
import type { Command } from 'commander';
import { addAsOption } from '../admin-options.ts';
import { addRegistryOptions, registryOps, type RegistryFlags } from '../registry-access.ts';
import { guarded } from '../failure.ts';
import { printJson, printLines } from '../output.ts';

export function register(program: Command): void {
  const material = program.command('material').description('materials in the registry (each holds numbered versions)');
  addAsOption(addRegistryOptions(material.command('add')))
    .description('create a material; its slug (lowercase letters, digits, hyphens) is how designs name it')
    .argument('<slug>', 'e.g. sin-pecvd-a')
    .requiredOption('--name <text>', 'display name, e.g. "PECVD silicon nitride, recipe A"')
    .option('--description <text>', 'what the material is, how it is made')
    .option('--tag <tag...>', 'tags for finding it (repeatable)')
    .option('--json', 'print the material as JSON')
    .addHelpText('after', '\nExample:\n  nkledger material add sin-pecvd-a --name "PECVD SiNx, recipe A" --tag nitride --tag pecvd')
    .action(
      guarded(async (slug: string, opts: RegistryFlags & { name: string; description?: string; tag?: string[]; json?: boolean }) => {
        const created = await registryOps(opts).createMaterial({ slug, name: opts.name, description: opts.description, tags: opts.tag });
        if (opts.json) return printJson(created);
        printLines([`created material ${created.slug} (${created.name}); add versions with: nkledger import FILE --material ${created.slug}`]);
      }),
    );

  addAsOption(addRegistryOptions(material.command('edit')))
    .description("change a material's name, description or tags (audit-logged; the slug never changes)")
    .argument('<slug>', 'the material, e.g. sin-pecvd-a')
    .option('--name <text>', 'new display name')
    .option('--description <text>', 'new description')
    .option('--tag <tag...>', 'tags to add (repeatable)')
    .option('--untag <tag...>', 'tags to remove (repeatable)')
    .option('--json', 'print the material as JSON, with "changed": the fields that changed')
    .addHelpText('after', '\nExample:\n  nkledger material edit sin-pecvd-a --name "PECVD SiNx, recipe A (300 C)" --tag low-stress --untag draft')
    .action(
      guarded(
        async (slug: string, opts: RegistryFlags & { name?: string; description?: string; tag?: string[]; untag?: string[]; json?: boolean }) => {
          const edited = await registryOps(opts).editMaterial(slug, {
            name: opts.name,
            description: opts.description,
            addTags: opts.tag,
            removeTags: opts.untag,
          });
          if (opts.json) return printJson(edited);
          printLines([
            edited.changed.length
              ? `edited ${edited.slug}: ${edited.changed.join(', ')} changed`
              : `${edited.slug}: nothing changed (the values given are the current ones)`,
          ]);
        },
      ),
    );
}
