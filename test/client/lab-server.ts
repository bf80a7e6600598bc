/**
 * A lab for server-mode tests: a starting registry with one token per person (alice and bob, approvers; ada,
 * admin), copied to a file for file mode and served in-process on 127.0.0.1 (a free port) for server mode, and
 * the environments that make the CLI act as each person in each mode.
 */
import { copyFileSync, mkdtempSync, rmSync } from 'node:fs';
import { createServer } from 'node:net';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { startServer, type RunningServer } from '../../src/api/server.ts';
import { openRegistry, type Registry } from '../../src/registry/open.ts';
import { createToken } from '../../src/service/tokens.ts';

export const PEOPLE = { alice: 'approver', bob: 'approver', ada: 'admin', rita: 'reader' } as const;
export type Person = keyof typeof PEOPLE;

export interface Lab {
  dir: string;
  fileDb: string;
  serverDb: string;
  registry: Registry;
  server: RunningServer;
  url: string;
  tokens: Record<Person, string>;
  /** Environment of a CLI run as `person`: file mode (NKLEDGER_DB + NKLEDGER_USER) or server mode (NKLEDGER_SERVER + NKLEDGER_TOKEN). */
  env(mode: 'file' | 'server', person: Person): Record<string, string | undefined>;
  stop(): Promise<void>;
}

/** Variables of the developer's own shell that would change a run. */
export const CLEAN_ENV = {
  NKLEDGER_DB: undefined,
  NKLEDGER_USER: undefined,
  NKLEDGER_SERVER: undefined,
  NKLEDGER_TOKEN: undefined,
  NKLEDGER_CREDENTIALS: '/nonexistent/nkledger-test-credentials.json',
};

export async function startLab(): Promise<Lab> {
  const dir = mkdtempSync(join(tmpdir(), 'nkledger-lab-'));
  const template = join(dir, 'start.db');
  const start = await openRegistry(template);
  const tokens = {} as Record<Person, string>;
  for (const [user, role] of Object.entries(PEOPLE)) tokens[user as Person] = (await createToken(start, { user, role, createdBy: 'setup' })).token;
  await start.close();
  const fileDb = join(dir, 'file.db');
  const serverDb = join(dir, 'server.db');
  copyFileSync(template, fileDb);
  copyFileSync(template, serverDb);
  const registry = await openRegistry(serverDb);
  const server = await startServer({ registry, host: '127.0.0.1', port: 0, logFault: () => {}, logEnvironment: () => {} });
  return {
    dir,
    fileDb,
    serverDb,
    registry,
    server,
    url: server.url,
    tokens,
    env: (mode, person) =>
      mode === 'file'
        ? { ...CLEAN_ENV, NKLEDGER_DB: fileDb, NKLEDGER_USER: person }
        : { ...CLEAN_ENV, NKLEDGER_SERVER: server.url, NKLEDGER_TOKEN: tokens[person] },
    async stop() {
      await server.close(1000);
      await registry.close();
      rmSync(dir, { recursive: true, force: true });
    },
  };
}

/** A 127.0.0.1 port nothing listens on (bound, then released). */
export async function closedPort(): Promise<number> {
  const probe = createServer();
  await new Promise<void>((resolve) => probe.listen(0, '127.0.0.1', resolve));
  const { port } = probe.address() as { port: number };
  await new Promise<void>((resolve) => probe.close(() => resolve()));
  return port;
}
