/** `nkledger serve`: the HTTP API over the registry until SIGINT/SIGTERM, then a clean shutdown. */
import type { Command } from 'commander';
import { InputError } from '../../errors.ts';
import { parseOptionNumber } from '../../io/numbers.ts';
import { openRegistry, type Registry } from '../../registry/open.ts';
import { DEFAULT_HOST, DEFAULT_PORT, isLoopbackHost, startServer, type RunningServer } from '../../api/server.ts';
import type { Settings } from '../../service/settings.ts';
import { createWebPages, forwardToPages } from '../../web/app.tsx';
import { anonymousReadsAllowed, readSettings } from '../../service/settings.ts';
import { guarded } from '../failure.ts';
import { cliIo } from '../io.ts';
import { addDbOption } from '../admin-options.ts';
import { DEFAULT_COMPUTE_QUEUE, defaultComputeThreads, type ComputePoolOptions } from '../../service/compute-pool.ts';

/** Seconds open requests may take to finish after SIGTERM/SIGINT before their connections are closed. */
export const DEFAULT_GRACE_SECONDS = 10;

export function parsePort(text: string): number {
  return parseOptionNumber(text, '--port', { integer: true, min: 0, max: 65535, hint: '0 picks a free port' });
}

/**
 * Serve `registry` until SIGINT or SIGTERM; then stop accepting, let in-flight requests finish and
 * close the database. Shared by `serve` and `demo`.
 */
export async function serveUntilSignal(
  registry: Registry,
  options: { host: string; port: number; settings?: Partial<Settings>; graceSeconds?: number; compute?: ComputePoolOptions },
  announce: (server: RunningServer) => void,
): Promise<void> {
  let server: RunningServer;
  try {
    server = await startServer({
      registry,
      ...options,
      extend: (app, shared) => app.all('*', forwardToPages(createWebPages({ registry, ...shared, settings: options.settings }))),
    });
  } catch (err) {
    await registry.close();
    const code = (err as { code?: string }).code;
    if (code === 'EADDRINUSE') {
      // Under `npm start` the flag has to pass through npm: say so, or the advice does not work as typed.
      const other = options.port === 0 ? 0 : options.port + 1;
      const how = cliIo().env.npm_lifecycle_event === 'start' ? `npm start -- --port ${other}` : `--port ${other} (0 picks a free port)`;
      throw new InputError(
        'serve-listen',
        `cannot listen on ${options.host}:${options.port}: the port is in use (EADDRINUSE), perhaps by another nkledger server; choose another port: ${how}`,
      );
    }
    if (code === 'EACCES' || code === 'EADDRNOTAVAIL') {
      throw new InputError('serve-listen', `cannot listen on ${options.host}:${options.port}: ${code}`);
    }
    throw err;
  }
  announce(server);
  await new Promise<void>((resolve) => {
    const stop = (signal: string) => {
      const grace = options.graceSeconds ?? DEFAULT_GRACE_SECONDS;
      cliIo().stderr.write(`nkledger serve: ${signal}: no new connections; open requests get ${grace} s to finish, then the registry closes\n`);
      process.off('SIGINT', stop);
      process.off('SIGTERM', stop);
      void server
        .close(grace * 1000)
        .then(() => registry.close())
        .then(resolve, resolve);
    };
    process.on('SIGINT', stop);
    process.on('SIGTERM', stop);
  });
}

export function register(program: Command): void {
  addDbOption(program.command('serve'))
    .description('serve the registry over HTTP: browser pages at /, the API under /api/v1 (description at /api/v1/openapi.json)')
    .option('--host <address>', 'address to listen on (use 0.0.0.0 only behind TLS)', DEFAULT_HOST)
    .option('--port <port>', 'TCP port (0 picks a free one)', String(DEFAULT_PORT))
    .option(
      '--grace <seconds>',
      'on SIGTERM/SIGINT, how long open requests may take to finish before their connections are closed',
      String(DEFAULT_GRACE_SECONDS),
    )
    .option(
      '--compute-threads <n>',
      `worker threads for fits and KK checks (default: one per spare core, at least one; here ${defaultComputeThreads()})`,
    )
    .option('--compute-queue <n>', `fits and checks that may wait for a thread before more are refused with 503 (default ${DEFAULT_COMPUTE_QUEUE})`)
    .action(
      guarded(async (opts: { db?: string; host: string; port: string; grace: string; computeThreads?: string; computeQueue?: string }) => {
        const port = parsePort(opts.port);
        const graceSeconds = parseOptionNumber(opts.grace, '--grace', { min: 0, max: 3600 });
        const compute = {
          threads:
            opts.computeThreads === undefined
              ? undefined
              : parseOptionNumber(opts.computeThreads, '--compute-threads', { integer: true, min: 1, max: 256 }),
          maxQueue:
            opts.computeQueue === undefined
              ? undefined
              : parseOptionNumber(opts.computeQueue, '--compute-queue', { integer: true, min: 0, max: 100_000 }),
        };
        const registry = await openRegistry(opts.db, { create: 'never' });
        const anonymous = (await readSettings(registry)).anonymous_reads;

        await serveUntilSignal(registry, { host: opts.host, port, graceSeconds, compute }, (server) => {
          const open = anonymousReadsAllowed({ anonymous_reads: anonymous }, isLoopbackHost(opts.host));
          cliIo().stdout.write(`nkledger serving ${registry.path} at ${server.url}/ (pages) and ${server.url}/api/v1/materials (API)\n`);
          cliIo().stdout.write(`  OpenAPI: ${server.url}/api/v1/openapi.json\n`);
          cliIo().stdout.write(`  reads without a token: ${open ? 'allowed' : 'refused'} (setting anonymous_reads = ${anonymous})\n`);
          if (registry.readonly) cliIo().stdout.write('  the registry file is read-only: reads are served, writes are refused (503)\n');
          cliIo().stdout.write('  Ctrl-C stops the server after open requests finish (at most --grace seconds)\n');
        });
      }),
    );
}
