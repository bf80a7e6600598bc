/**
 * The --db and --as flags, and the acting user of file mode. Nothing heavy is imported here: registry commands in
 * server mode never load the database code (src/cli/file-registry.ts opens the registry in file mode).
 */
import { userInfo } from 'node:os';
import type { Command } from 'commander';
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
