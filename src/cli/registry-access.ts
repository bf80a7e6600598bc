/**
 * Which registry a command uses: a server (`--server URL`, else $NKLEDGER_SERVER) or a file (`--db PATH`, else
 * $NKLEDGER_DB, else ./nkledger.db), in that order of precedence. Commands ask `registryOps(opts)` for the
 * operations and render the same values either way (src/client/operations.ts).
 */
import type { Command } from 'commander';
import { tokenFor } from '../client/credentials.ts';
import { normalizeServerUrl, ServerClient } from '../client/http.ts';
import type { RegistryOperations } from '../client/operations.ts';
import { serverRegistry } from '../client/server-registry.ts';
import { parseOptionNumber } from '../io/numbers.ts';
import { addDbOption } from './admin-options.ts';
import { cliIo } from './io.ts';

export interface RegistryFlags {
  db?: string;
  server?: string;
  as?: string;
}

export function addServerOption(cmd: Command): Command {
  return cmd.option(
    '--server <url>',
    'use the nkledger server at URL instead of a file (default: $NKLEDGER_SERVER); the token comes from $NKLEDGER_TOKEN or `nkledger login URL`',
  );
}

/** --db and --server: the registry a command reads or writes. */
export function addRegistryOptions(cmd: Command, what?: string): Command {
  return addServerOption(addDbOption(cmd, what));
}

/** The server URL a run uses (normalized), or undefined for file mode. */
export function serverUrlOf(opts: { server?: string }): string | undefined {
  const given = opts.server ?? (cliIo().env.NKLEDGER_SERVER || undefined);
  return given === undefined ? undefined : normalizeServerUrl(given);
}

/** A client for `url` with the run's token and time limit. */
export function serverClient(url: string, token = tokenFor(cliIo().env, url)): ServerClient {
  const env = cliIo().env;
  const timeout = env.NKLEDGER_TIMEOUT === undefined ? undefined : parseOptionNumber(env.NKLEDGER_TIMEOUT, 'NKLEDGER_TIMEOUT', { above: 0 });
  return new ServerClient(url, { token, ...(timeout !== undefined && { timeoutMs: timeout * 1000 }) });
}

export function registryOps(opts: RegistryFlags): RegistryOperations {
  const url = serverUrlOf(opts);
  if (url === undefined) return fileMode(opts);
  const user = cliIo().env.NKLEDGER_USER;
  const actorGiven = opts.as !== undefined ? `--as ${opts.as}` : user ? `NKLEDGER_USER=${user}` : undefined;
  return serverRegistry(serverClient(url), { actorGiven });
}

/**
 * File mode's operations, loaded on first use: the database code (drizzle, better-sqlite3, the service layer) is
 * then never loaded by a command in server mode.
 */
function fileMode(opts: RegistryFlags): RegistryOperations {
  const ops = import('./file-registry.ts').then((m) => m.fileRegistry(opts));
  ops.catch(() => {}); // a failed load is reported by the call that awaits it
  return new Proxy({} as RegistryOperations, {
    get:
      (_target, name: keyof RegistryOperations) =>
      async (...args: unknown[]) =>
        ((await ops)[name] as (...a: unknown[]) => unknown)(...args),
  });
}
