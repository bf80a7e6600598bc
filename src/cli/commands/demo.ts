/**
 * `nkledger demo` (what `npm start` runs): on first run, builds a demo registry in .demo/ from the
 * invented Marrowick Optics tables through the real import, fit, KK and approval pipeline
 * (src/service/demo-registry.ts), makes one token per role, then serves the HTTP API on loopback.
 * Later runs reuse the registry and the tokens; --rebuild starts over.
 */
import { existsSync, mkdirSync, readFileSync, renameSync, rmSync, writeFileSync } from 'node:fs';
import { join, resolve } from 'node:path';
import { fileURLToPath } from 'node:url';
import type { Command } from 'commander';
import { openRegistry } from '../../registry/open.ts';
import { TOKEN_ROLES, type TokenRole } from '../../registry/schema-auth.ts';
import { buildDemoRegistry } from '../../service/demo-registry.ts';
import { createToken } from '../../service/tokens.ts';
import { DEFAULT_PORT } from '../../api/server.ts';
import { guarded } from '../failure.ts';
import { printLines } from '../output.ts';
import { parsePort, serveUntilSignal } from './serve.ts';

export const DEMO_DATA_DIR = fileURLToPath(new URL('../../../data/marrowick/', import.meta.url));
const DEMO_HOST = '127.0.0.1';

interface DemoPaths {
  dir: string;
  db: string;
  tokens: string;
  lock: string;
}

function demoPaths(dir: string): DemoPaths {
  const abs = resolve(dir);
  return { dir: abs, db: join(abs, 'nkledger.db'), tokens: join(abs, 'tokens.json'), lock: join(abs, 'design-lock.json') };
}

/** Build the registry under a temporary name and rename it into place, so an interrupted build is redone. */
async function buildDemo(paths: DemoPaths): Promise<string[]> {
  mkdirSync(paths.dir, { recursive: true });
  const temp = `${paths.db}.building`;
  for (const f of [temp, `${temp}-wal`, `${temp}-shm`]) rmSync(f, { force: true });
  const registry = await openRegistry(temp);
  let lines: string[];
  try {
    const summary = await buildDemoRegistry(registry, DEMO_DATA_DIR, paths.lock);
    const tokens: Record<string, string> = {};
    for (const role of TOKEN_ROLES)
      tokens[role] = (await createToken(registry, { user: `demo-${role}`, role, createdBy: 'nkledger demo', expires: 'never' })).token;
    // Demo only: the secrets are kept in clear here so every `npm start` can print them again.
    writeFileSync(
      paths.tokens,
      `${JSON.stringify({ note: 'DEMO tokens of the demo registry only; never do this with real tokens', ...tokens }, null, 2)}\n`,
    );
    const verdict = summary.lockReport.entries.map((e) => `    ${e.outcome.padEnd(8)} ${e.message}`);
    lines = [
      'Built the demo registry (invented Marrowick Optics data, data/README.md):',
      ...summary.steps.map((s) => `  ${s}`),
      `  lock verify ${summary.lockfile}:`,
      ...verdict,
    ];
  } finally {
    await registry.close();
  }
  renameSync(temp, paths.db);
  return lines;
}

function readTokens(paths: DemoPaths): Record<TokenRole, string> {
  return JSON.parse(readFileSync(paths.tokens, 'utf8'));
}

function usage(url: string, tokens: Record<TokenRole, string>, lockPath: string): string[] {
  const api = `${url}/api/v1`;
  return [
    '',
    `nkledger demo pages at ${url}/   (open in a browser; sign in with a token below to review or upload)`,
    `nkledger demo API at ${api}   (OpenAPI: ${api}/openapi.json)`,
    'Demo tokens (send as "Authorization: Bearer <token>"):',
    ...TOKEN_ROLES.map((role) => `  ${role.padEnd(8)} ${tokens[role]}`),
    '',
    'Try:',
    `  curl -s ${api}/materials`,
    `  curl -s ${api}/materials/sinx-pecvd`,
    `  curl -s '${api}/materials/sinx-pecvd/versions/2/nk?wavelengths_nm=405,532,632.8'`,
    `  curl -s -H 'Accept: text/csv' '${api}/materials/sio2-thermal/versions/1/nk?from_nm=400&to_nm=800&step_nm=50'`,
    `  curl -si ${api}/materials/sinx-pecvd/versions/1 | head -8        # retired: Deprecation header, still resolves`,
    `  curl -s -X POST -H 'Content-Type: application/json' --data @${lockPath} ${api}/locks/verify`,
    `  curl -s -X POST -H 'Authorization: Bearer ${tokens.approver}' ${api}/materials/a-si-h/versions/1/approve`,
    '',
    'Ctrl-C stops the server.',
  ];
}

export function register(program: Command): void {
  program
    .command('demo')
    .description('build (first run) and serve a demo registry of invented Marrowick Optics data (what `npm start` runs)')
    .option('--dir <path>', 'where the demo registry, its tokens and lockfile live', '.demo')
    .option('--port <port>', 'TCP port on 127.0.0.1 (0 picks a free one)', String(DEFAULT_PORT))
    .option('--rebuild', 'throw the demo registry away and build it again')
    .option('--no-serve', 'build (if needed) and print, but do not start the server')
    .action(
      guarded(async (opts: { dir: string; port: string; rebuild?: boolean; serve: boolean }) => {
        const port = parsePort(opts.port);
        const paths = demoPaths(opts.dir);
        if (opts.rebuild) for (const f of [paths.db, `${paths.db}-wal`, `${paths.db}-shm`, paths.tokens, paths.lock]) rmSync(f, { force: true });
        if (!existsSync(paths.db) || !existsSync(paths.tokens)) printLines(await buildDemo(paths));
        else printLines([`Using the demo registry ${paths.db} (--rebuild starts over).`]);
        const tokens = readTokens(paths);
        if (!opts.serve) return printLines(usage(`http://${DEMO_HOST}:${port}`, tokens, paths.lock));
        const registry = await openRegistry(paths.db);

        await serveUntilSignal(registry, { host: DEMO_HOST, port }, (server) => printLines(usage(server.url, tokens, paths.lock)));
      }),
    );
}
