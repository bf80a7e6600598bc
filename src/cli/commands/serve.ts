/** `nkledger serve`: the HTTP API over the registry until SIGINT/SIGTERM, then a clean shutdown. */
import type { Command } from 'commander';
import { InputError } from '../../errors.ts';
import { parseOptionNumber } from '../../io/numbers.ts';
import { openRegistry, type Registry } from '../../registry/open.ts';
import { DEFAULT_HOST, DEFAULT_PORT, isLoopbackHost, startServer, type RunningServer } from '../../api/server.ts';
import type { Settings } from '../../service/settings.ts';
import { readSettings } from '../../service/settings.ts';
import { guarded } from '../failure.ts';
import { cliIo } from '../io.ts';
import { addDbOption } from '../admin-options.ts';

export function parsePort(text: string): number {
  return parseOptionNumber(text, '--port', { integer: true, min: 0, max: 65535, hint: '0 picks a free port' });
}

/**
 * Serve `registry` until SIGINT or SIGTERM; then stop accepting, let in-flight requests finish and
 * close the database. Shared by `serve` and `demo`.
 */
export async function serveUntilSignal(
  registry: Registry,
  options: { host: string; port: number; settings?: Partial<Settings> },
  announce: (server: RunningServer) => void,
): Promise<void> {
  let server: RunningServer;
  try {
    server = await startServer({ registry, ...options });
  } catch (err) {
    registry.close();
    const code = (err as { code?: string }).code;
    if (code === 'EADDRINUSE' || code === 'EACCES' || code === 'EADDRNOTAVAIL') {
      throw new InputError('serve-listen', `cannot listen on ${options.host}:${options.port}: ${code}`);
    }
    throw err;
  }
  announce(server);
  await new Promise<void>((resolve) => {
    const stop = (signal: string) => {
      cliIo().stderr.write(`nkledger serve: ${signal}: finishing open requests, then closing the registry\n`);
      process.off('SIGINT', stop);
      process.off('SIGTERM', stop);
      server.close().then(() => {
        registry.close();
        resolve();
      });
    };
    process.on('SIGINT', stop);
    process.on('SIGTERM', stop);
  });
}

export function register(program: Command): void {
  addDbOption(program.command('serve'))
    .description('serve the registry over HTTP (the API under /api/v1; description at /api/v1/openapi.json)')
    .option('--host <address>', 'address to listen on (use 0.0.0.0 only behind TLS)', DEFAULT_HOST)
    .option('--port <port>', 'TCP port (0 picks a free one)', String(DEFAULT_PORT))
    .action(
      guarded(async (opts: { db?: string; host: string; port: string }) => {
        const port = parsePort(opts.port);
        const registry = openRegistry(opts.db);
        const anonymous = readSettings(registry).anonymous_reads;
        await serveUntilSignal(registry, { host: opts.host, port }, (server) => {
          const open = anonymous === 'on' || (anonymous === 'auto' && isLoopbackHost(opts.host));
          cliIo().stdout.write(`nkledger serving ${registry.path} at ${server.url}/api/v1/materials\n`);
          cliIo().stdout.write(`  OpenAPI: ${server.url}/api/v1/openapi.json\n`);
          cliIo().stdout.write(`  reads without a token: ${open ? 'allowed' : 'refused'} (setting anonymous_reads = ${anonymous})\n`);
          cliIo().stdout.write('  Ctrl-C stops the server after open requests finish\n');
        });
      }),
    );
}
