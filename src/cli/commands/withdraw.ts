/** `nkledger withdraw REF [--reason TEXT]`: withdraw a draft nobody should use (kept, never deleted). */
import type { Command } from 'commander';
import { lifecycleCommand } from '../lifecycle-command.ts';

export function register(program: Command): void {
  lifecycleCommand(
    program,
    'withdraw',
    'withdraw a draft that nobody should use (it stays in the registry and its number is never reused)',
    'nkledger withdraw sin-pecvd-a@4 --reason "wrong sample"',
    (registry, ref, opts) => registry.withdraw(ref, opts.reason),
  ).option('--reason <text>', 'why it is withdrawn');
}
