/** The shape shared by approve, retire and withdraw: resolve REF, change its status as the acting user, print it. */
import type { Command } from 'commander';
import type { Registry } from '../registry/open.ts';
import type { VersionRecord } from '../registry/types.ts';
import { actorFrom, addAsOption, addDbOption, withRegistry } from './admin-options.ts';
import { guarded } from './failure.ts';
import { printJson } from './output.ts';
import { printVersionBrief } from './registry-output.ts';

export interface LifecycleOptions {
  db?: string;
  as?: string;
  json?: boolean;
  reason?: string;
}

export function lifecycleCommand(
  program: Command,
  name: string,
  description: string,
  example: string,
  change: (registry: Registry, ref: string, actor: string, opts: LifecycleOptions) => VersionRecord,
): Command {
  return addAsOption(addDbOption(program.command(name)))
    .description(description)
    .argument('<ref>', 'the version, e.g. sin-pecvd-a@3')
    .option('--json', 'print the version record as JSON')
    .addHelpText('after', `\nExample:\n  ${example}`)
    .action(
      guarded(async (ref: string, opts: LifecycleOptions) => {
        const v = await withRegistry(opts, (r) => change(r, ref, actorFrom(opts), opts));
        if (opts.json) return printJson(v);
        printVersionBrief(v);
      }),
    );
}
