/** `nkledger retire REF --reason TEXT`: retire an approved version (it still resolves, with a warning). */
import type { Command } from 'commander';
import { lifecycleCommand } from '../lifecycle-command.ts';

export function register(program: Command): void {
  lifecycleCommand(
    program,
    'retire',
    'retire an approved version: pins to it keep resolving, but every use warns',
    'nkledger retire sin-pecvd-a@2 --reason "substrate model was wrong; use @3"',
    (registry, ref, opts) => registry.retire(ref, opts.reason ?? ''),
  ).requiredOption('--reason <text>', 'why it is retired (shown wherever it is used)');
}
