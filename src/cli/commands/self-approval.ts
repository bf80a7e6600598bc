/** `nkledger self-approval [on|off]`: the registry rule that lets a creator approve their own version. */
import type { Command } from 'commander';
import { InputError } from '../../errors.ts';
import { getRegistrySettings, setRegistrySetting } from '../../service/lifecycle.ts';
import { actorFrom, addAsOption, addDbOption, withRegistry } from '../admin-options.ts';
import { guarded } from '../failure.ts';
import { printJson, printLines } from '../output.ts';

export function register(program: Command): void {
  addAsOption(addDbOption(program.command('self-approval')))
    .description('show or change whether creators may approve their own versions (for a one-person lab; off by default)')
    .argument('[state]', 'on or off (omit to show)')
    .option('--json', 'print {"allow_self_approval"} as JSON')
    .addHelpText('after', '\nApprovals made under it are recorded as self-approval.\n\nExample:\n  nkledger self-approval on')
    .action(
      guarded(async (state: string | undefined, opts: { db?: string; as?: string; json?: boolean }) => {
        if (state !== undefined && state !== 'on' && state !== 'off') throw new InputError('bad-option', `self-approval ${state}: say on or off`);
        const settings = await withRegistry(opts, (r) =>
          state === undefined ? getRegistrySettings(r) : setRegistrySetting(r, 'allow_self_approval', state === 'on', actorFrom(opts)),
        );
        if (opts.json) return printJson({ allow_self_approval: settings.allow_self_approval });
        printLines([`self-approval is ${settings.allow_self_approval ? 'on: creators may approve their own versions (recorded as self-approval)' : 'off: someone other than the creator must approve'}`]);
      }),
    );
}
