/** `nkledger approve REF`: approve a draft (by someone other than its creator, unless self-approval is on). */
import type { Command } from 'commander';
import { approve } from '../../service/lifecycle.ts';
import { lifecycleCommand } from '../lifecycle-command.ts';

export function register(program: Command): void {
  lifecycleCommand(
    program,
    'approve',
    'approve a draft version; the approver must not be its creator (a one-person lab: `nkledger settings set allow_self_approval on`)',
    'NKLEDGER_USER=bob nkledger approve sin-pecvd-a@3',
    (registry, ref, actor) => approve(registry, ref, actor),
  );
}
