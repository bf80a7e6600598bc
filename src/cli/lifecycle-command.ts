/** The shape shared by approve, retire and withdraw: resolve REF, change its status as the acting user, print it. */
import type { Command } from 'commander';
import type { RegistryOperations } from '../client/operations.ts';
import type { VersionRecord } from '../registry/types.ts';
import { addAsOption } from './admin-options.ts';
import { addRegistryOptions, registryOps, type RegistryFlags } from './registry-access.ts';
import { guarded } from './failure.ts';
import { printJson } from './output.ts';
import { printVersionBrief } from './registry-output.ts';

export interface LifecycleOptions extends RegistryFlags {
  json?: boolean;
  reason?: string;
}

export function lifecycleCommand(
  program: Command,
  name: string,
  description: string,
  example: string,
  change: (registry: RegistryOperations, ref: string, opts: LifecycleOptions) => Promise<VersionRecord>,
): Command {
  return addAsOption(addRegistryOptions(program.command(name)))
    .description(description)
    .argument('<ref>', 'the version, e.g. sin-pecvd-a@3')
    .option('--json', 'print the version record as JSON')
    .addHelpText('after', `\nExample:\n  ${example}`)
    .action(
      guarded(async (ref: string, opts: LifecycleOptions) => {
        const v = await change(registryOps(opts), ref, opts);
        if (opts.json) return printJson(v);
        printVersionBrief(v);
      }),
    );
}
