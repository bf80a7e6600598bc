/** The --db and --as flags of the admin commands (token, settings, serve), and opening the registry they name. */
import { userInfo } from 'node:os';
import type { Command } from 'commander';
import { environmentFault } from '../registry/faults.ts';
import { openRegistry, type OpenOptions, type Registry } from '../registry/open.ts';
import { cliIo } from './io.ts';

export function addDbOption(cmd: Command, what = 'registry database'): Command {
  return cmd.option('--db <path>', `${what} (default: $NKLEDGER_DB, else ./nkledger.db)`);
}

export function addAsOption(cmd: Command): Command {
  return cmd.option('--as <name>', 'who is acting, for the audit log (default: $NKLEDGER_USER, else the login name)');
}

/** The acting user: --as, else NKLEDGER_USER, else the operating-system login name. */
export function actorFrom(opts: { as?: string }): string {
  return opts.as ?? cliIo().env.NKLEDGER_USER ?? userInfo().username;
}

/**
 * Open the registry named by --db, run `use`, and close it whatever happens. A missing registry is refused
 * (exit 2, naming the path) unless `open.create` allows creating it; creating one is said on stderr.
 */
export async function withRegistry<T>(opts: { db?: string }, use: (registry: Registry) => T | Promise<T>, open: OpenOptions = {}): Promise<T> {
  const registry = openRegistry(opts.db, { create: 'never', ...open });
  if (registry.created) cliIo().stderr.write(`nkledger: created a new registry at ${registry.path}\n`);
  try {
    return await use(registry);
  } catch (err) {
    throw environmentFault(err, registry.path) ?? err;
  } finally {
    registry.close();
  }
}
