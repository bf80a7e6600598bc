/**
 * A throw-away PostgreSQL server for the tests (the registry on PostgreSQL, src/registry/schema-pg.ts).
 *
 * `startPostgres()` finds PostgreSQL 15+ (the newest /usr/lib/postgresql/N/bin, else `pg_config --bindir`),
 * runs `initdb` into a fresh temporary folder with trust authentication, and `pg_ctl start` on a free port of
 * 127.0.0.1 (Unix socket in the same folder), as the unprivileged `postgres` user when the tests run as root
 * (the server refuses to run as root), directly otherwise. Durability is switched off (fsync, synchronous
 * commit): the data lives only as long as the run. `stop()` shuts the server down and removes the folder.
 *
 * test/postgres-global-setup.ts starts one server for the whole run and hands its address to the test files
 * (vitest `provide`/`inject`); each test file makes its own database with `createDatabase()`.
 */
import { execFileSync, spawnSync } from 'node:child_process';
import { chmodSync, chownSync, existsSync, mkdtempSync, readdirSync, rmSync, writeFileSync } from 'node:fs';
import { createServer } from 'node:net';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import pg from 'pg';

/** What the tests print, and name their skipped suites by, where PostgreSQL is missing. */
export const POSTGRES_MISSING = 'PostgreSQL 15+ not found (initdb); these tests are skipped — .ci/run installs it';

const MIN_MAJOR = 15;

/** The one role the test server asks a password of (scram-sha-256 on 127.0.0.1); a test creates it with one. */
export const PASSWORD_ROLE = 'nkledger_password';

/** The folder of `initdb`/`pg_ctl` of the newest PostgreSQL ≥ 15 installed, or null. */
export function findPostgresBin(): string | null {
  const root = '/usr/lib/postgresql';
  const candidates: { major: number; dir: string }[] = [];
  if (existsSync(root)) {
    for (const name of readdirSync(root)) {
      const major = Number.parseInt(name, 10);
      const dir = join(root, name, 'bin');
      if (Number.isFinite(major) && existsSync(join(dir, 'initdb')) && existsSync(join(dir, 'pg_ctl'))) candidates.push({ major, dir });
    }
  }
  const fromConfig = spawnSync('pg_config', ['--bindir'], { encoding: 'utf8' });
  if (fromConfig.status === 0) {
    const dir = fromConfig.stdout.trim();
    const version = spawnSync(join(dir, 'initdb'), ['--version'], { encoding: 'utf8' });
    const major = Number.parseInt(/(\d+)/.exec(version.stdout ?? '')?.[1] ?? '', 10);
    if (version.status === 0 && Number.isFinite(major)) candidates.push({ major, dir });
  }
  const usable = candidates.filter((c) => c.major >= MIN_MAJOR).sort((a, b) => b.major - a.major);
  return usable[0]?.dir ?? null;
}

export interface PostgresServer {
  /** `postgres://postgres@127.0.0.1:PORT/postgres`: the superuser on the maintenance database. */
  adminUrl: string;
  port: number;
  /** Milliseconds from initdb to a server that accepts connections. */
  startMs: number;
  stop(): void;
}

function freePort(): Promise<number> {
  return new Promise((resolve, reject) => {
    const server = createServer();
    server.once('error', reject);
    server.listen(0, '127.0.0.1', () => {
      const address = server.address();
      const port = typeof address === 'object' && address ? address.port : 0;
      server.close(() => resolve(port));
    });
  });
}

const isRoot = () => typeof process.getuid === 'function' && process.getuid() === 0;

/** uid and gid of the `postgres` user, from the system's user database. */
function postgresUser(): { uid: number; gid: number } | null {
  const r = spawnSync('id', ['-u', 'postgres'], { encoding: 'utf8' });
  const g = spawnSync('id', ['-g', 'postgres'], { encoding: 'utf8' });
  if (r.status !== 0 || g.status !== 0) return null;
  return { uid: Number(r.stdout.trim()), gid: Number(g.stdout.trim()) };
}

/**
 * A fresh folder the server's user can write: under the system's temporary folder, or /tmp when a parent of
 * that one is closed to the `postgres` user (a TMPDIR in root's home, say).
 */
function serverFolder(run: (cmd: string, args: string[]) => { status: number | null }, owner: { uid: number; gid: number } | null): string {
  for (const parent of [...new Set([tmpdir(), '/tmp'])]) {
    const dir = mkdtempSync(join(parent, 'nkledger-pg-'));
    if (owner) chownSync(dir, owner.uid, owner.gid);
    chmodSync(dir, 0o700);
    if (run('test', ['-w', dir, '-a', '-x', dir]).status === 0) return dir;
    rmSync(dir, { recursive: true, force: true });
  }
  throw new Error('no temporary folder the postgres user can write (tried the system temporary folder and /tmp)');
}

/** Start a PostgreSQL server for this test run; null (with the reason) where PostgreSQL 15+ is not installed. */
export async function startPostgres(): Promise<PostgresServer | { missing: string }> {
  const bin = findPostgresBin();
  if (!bin) return { missing: POSTGRES_MISSING };
  const root = isRoot();
  const owner = root ? postgresUser() : null;
  if (root && !owner) return { missing: 'PostgreSQL tests need the unprivileged user "postgres" when run as root; these tests are skipped' };
  const asServerUser = (cmd: string, args: string[]) => (root ? { cmd: 'runuser', args: ['-u', 'postgres', '--', cmd, ...args] } : { cmd, args });
  const run = (cmd: string, args: string[]) => {
    const c = asServerUser(cmd, args);
    return spawnSync(c.cmd, c.args, { encoding: 'utf8', timeout: 60_000 });
  };
  const started = performance.now();
  const dir = serverFolder(run, owner);
  const data = join(dir, 'data');
  const cleanup = () => rmSync(dir, { recursive: true, force: true });
  const init = run(join(bin, 'initdb'), ['-D', data, '-U', 'postgres', '-A', 'trust', '-E', 'UTF8', '--locale=C', '--no-sync']);
  if (init.status !== 0) {
    cleanup();
    throw new Error(`initdb failed:\n${init.stdout}${init.stderr}`);
  }
  // Only the loopback address and the folder's socket: nothing else can reach this server. Passwords are asked
  // of one role only, PASSWORD_ROLE, which tests of a refused password create (no other role needs one).
  const hba = join(data, 'pg_hba.conf');
  writeFileSync(hba, `local all all trust\nhost all ${PASSWORD_ROLE} 127.0.0.1/32 scram-sha-256\nhost all all 127.0.0.1/32 trust\n`);
  if (owner) chownSync(hba, owner.uid, owner.gid);
  let port = 0;
  let lastFailure = '';
  // The port is free when chosen but could be taken before the server binds it: try a few.
  for (let attempt = 0; attempt < 3 && port === 0; attempt++) {
    const candidate = await freePort();
    const options = `-k ${dir} -h 127.0.0.1 -p ${candidate} -c fsync=off -c synchronous_commit=off -c full_page_writes=off`;
    const start = run(join(bin, 'pg_ctl'), ['start', '-w', '-t', '60', '-D', data, '-l', join(dir, 'server.log'), '-o', options]);
    if (start.status === 0) port = candidate;
    else lastFailure = `${start.stdout}${start.stderr}`;
  }
  if (port === 0) {
    cleanup();
    throw new Error(`pg_ctl start failed:\n${lastFailure}`);
  }
  const startMs = performance.now() - started;
  let stopped = false;
  const stop = () => {
    if (stopped) return;
    stopped = true;
    const c = asServerUser(join(bin, 'pg_ctl'), ['stop', '-m', 'immediate', '-w', '-D', data]);
    try {
      execFileSync(c.cmd, c.args, { stdio: 'ignore', timeout: 30_000 });
    } finally {
      cleanup();
    }
  };
  // A run that ends without teardown (an interrupt) still stops the server and removes the folder.
  process.once('exit', stop);
  return { adminUrl: `postgres://postgres@127.0.0.1:${port}/postgres`, port, startMs, stop };
}

let made = 0;

/** A new, empty database on the server of `adminUrl`; its `postgres://` URL. */
export async function createDatabase(adminUrl: string, prefix = 'nkledger_test'): Promise<string> {
  const name = `${prefix}_${process.pid}_${Date.now().toString(36)}_${made++}`;
  const client = new pg.Client({ connectionString: adminUrl });
  await client.connect();
  try {
    await client.query(`CREATE DATABASE "${name}"`);
  } finally {
    await client.end();
  }
  const url = new URL(adminUrl);
  url.pathname = `/${name}`;
  return url.toString();
}

/**
 * A transaction held open: `start` gets the body to run inside it (e.g. `(body) => pgWriteTransaction(h, body)`);
 * the body first runs `first` (e.g. a write whose row lock is to be held), then waits. Resolves once `first` is done
 * inside the transaction, with `release()` to let it finish and `done` settling after.
 */
export async function heldOpen(
  start: (body: () => Promise<void>) => Promise<unknown>,
  first: () => Promise<unknown> = async () => {},
): Promise<{ release: () => void; done: Promise<unknown> }> {
  let release!: () => void;
  const released = new Promise<void>((resolve) => {
    release = resolve;
  });
  let entered!: () => void;
  const inside = new Promise<void>((resolve) => {
    entered = resolve;
  });
  const done = start(async () => {
    await first();
    entered();
    await released;
  });
  await Promise.race([inside, done]);
  return { release, done };
}
