/**
 * Faults of the environment, simulated: a full disk (SQLite's PRAGMA max_page_count caps the file, so the
 * next page it needs fails with SQLITE_FULL), a read-only registry file, corrupted pages (bytes of a copy
 * overwritten), a registry file removed or replaced under a running server, and a registry path that names
 * nothing. Each must be reported as what it is — CLI exit 4 (2 for a path that names no registry), API 503
 * or 507 with its own problem type — saying nothing was written, and never as an internal bug (exit 1 / 500).
 */
import Database from 'better-sqlite3';
import { execFile } from 'node:child_process';
import {
  chmodSync,
  copyFileSync,
  existsSync,
  mkdirSync,
  mkdtempSync,
  openSync,
  readFileSync,
  renameSync,
  rmSync,
  writeSync,
  closeSync,
} from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { EnvironmentError } from '../../src/errors.ts';
import { statusOf } from '../../src/http-status.ts';
import { startServer } from '../../src/api/server.ts';
import { approve, createMaterial, importVersion, listMaterials, openRegistry, showVersion, verifyRegistry } from '../../src/service/registry.ts';
import { createToken } from '../../src/service/tokens.ts';
import { cauchyTable } from '../registry/helpers.ts';
import { BIN } from './processes.ts';

const dir = mkdtempSync(join(tmpdir(), 'nkledger-faults-'));
chmodSync(dir, 0o755); // the read-only test runs the CLI as an unprivileged user, who must reach the files
const base = join(dir, 'base.db');
/** Bearer headers for an approver and an editor, made in the base registry (so every copy has them). */
let approver: Record<string, string>;
let editor: Record<string, string>;

/** Run the CLI (asynchronously, so a test's commands run side by side). */
function run(args: string[], options: { uid?: number } = {}): Promise<{ code: number | null; out: string; err: string }> {
  return new Promise((resolve) => {
    execFile(
      process.execPath,
      [BIN, ...args],
      {
        encoding: 'utf8',
        env: { ...process.env, NKLEDGER_USER: 'ada', NKLEDGER_DB: '', HOME: dir },
        cwd: dir,
        timeout: 60_000,
        ...(options.uid === undefined ? {} : { uid: options.uid, gid: options.uid }),
      },
      (error, out, err) => resolve({ code: error ? ((error as { code?: number }).code ?? null) : 0, out, err }),
    );
  });
}

/** A copy of the base registry with everything in the main file (no -wal), in rollback-journal mode when asked. */
function copyOf(name: string): string {
  const path = join(dir, name);
  copyFileSync(base, path);
  return path;
}

beforeAll(async () => {
  const registry = await openRegistry(base);
  await createMaterial(registry, { slug: 'film', name: 'Film' }, 'ada');
  for (let i = 0; i < 20; i++) await importVersion(registry, { slug: 'film', table: cauchyTable(1.4 + i / 100) }, 'ada');
  await approve(registry, 'film@1', 'bob');
  approver = { authorization: `Bearer ${(await createToken(registry, { user: 'bob', role: 'approver', createdBy: 'root' })).token}` };
  editor = { authorization: `Bearer ${(await createToken(registry, { user: 'eve', role: 'editor', createdBy: 'root' })).token}` };
  registry.sqlite.pragma('wal_checkpoint(TRUNCATE)');
  registry.sqlite.pragma('journal_mode = DELETE');
  await registry.close();
});
afterAll(() => rmSync(dir, { recursive: true, force: true }));

const bigTable = () => {
  const wavelengthNm = Array.from({ length: 3000 }, (_, i) => 300 + i * 0.25);
  return { wavelengthNm, n: wavelengthNm.map((w) => 1.5 + 3000 / w ** 2), k: wavelengthNm.map(() => 0) };
};

describe('a full disk (SQLITE_FULL)', () => {
  it('refuses the write as an environment fault, writes nothing, and the registry stays whole', async () => {
    const path = copyOf('full.db');
    const registry = await openRegistry(path);
    try {
      const pages = (registry.sqlite.pragma('page_count') as { page_count: number }[])[0].page_count;
      registry.sqlite.pragma(`max_page_count = ${pages}`);
      const before = registry.sqlite.prepare('SELECT (SELECT count(*) FROM material_versions) v, (SELECT count(*) FROM audit_log) a').get();
      let thrown: unknown;
      try {
        await importVersion(registry, { slug: 'film', table: bigTable() }, 'ada');
      } catch (err) {
        thrown = err;
      }
      expect(thrown).toBeInstanceOf(EnvironmentError);
      expect(thrown).toMatchObject({ rule: 'registry-disk-full' });
      expect(statusOf(thrown as EnvironmentError)).toBe(507); // the API's answer (src/http-status.ts)
      expect((thrown as Error).message).toMatch(/full.*nothing was written/);
      expect(registry.sqlite.prepare('SELECT (SELECT count(*) FROM material_versions) v, (SELECT count(*) FROM audit_log) a').get()).toEqual(before);
      expect((await verifyRegistry(registry)).ok).toBe(true);
    } finally {
      await registry.close();
    }
  });

  it('is answered 507 with its own problem type over HTTP, logged as one line, not as an internal error', async () => {
    const path = copyOf('full-api.db');
    const registry = await openRegistry(path);
    const logged: string[] = [];
    const server = await startServer({
      registry,
      host: '127.0.0.1',
      port: 0,
      logEnvironment: (f) => logged.push(f.describe()),
      logFault: (e) => logged.push(`INTERNAL ${e}`),
    });
    try {
      const pages = (registry.sqlite.pragma('page_count') as { page_count: number }[])[0].page_count;
      registry.sqlite.pragma(`max_page_count = ${pages}`);
      const csv = `wavelength_nm,n,k\n${bigTable()
        .wavelengthNm.map((w) => `${w},${(1.5 + 3000 / w ** 2).toFixed(6)},0`)
        .join('\n')}\n`;
      const res = await fetch(`${server.url}/api/v1/materials/film/versions`, {
        method: 'POST',
        headers: { 'content-type': 'text/csv', ...editor },
        body: csv,
      });
      expect(res.status).toBe(507);
      const problem = await res.json();
      expect(problem).toMatchObject({ status: 507, rule: 'registry-disk-full', type: 'urn:nkledger:problem:registry-disk-full' });
      expect(problem.detail).toMatch(/nothing was written/);
      expect(logged).toEqual([expect.stringMatching(/full.*\[registry-disk-full\]/)]);
    } finally {
      await server.close();
      await registry.close();
    }
  });
});

describe('a read-only registry file', () => {
  it('serves reads and refuses writes clearly (opened read-only: no WAL switch, no migration)', async () => {
    const path = copyOf('ro-service.db');
    const bytes = readFileSync(path);
    const registry = await openRegistry(path, { readonly: true });
    try {
      expect(registry.readonly).toBe(true);
      expect((await listMaterials(registry)).map((m) => m.slug)).toEqual(['film']);
      expect((await showVersion(registry, 'film@1')).status).toBe('approved');
      expect((await verifyRegistry(registry)).ok).toBe(true);
      await expect(approve(registry, 'film@2', 'bob')).rejects.toThrow(/open read-only.*nothing was written/);
      await expect(approve(registry, 'film@2', 'bob')).rejects.toThrow(EnvironmentError);
    } finally {
      await registry.close();
    }
    expect(readFileSync(path).equals(bytes)).toBe(true);
  });

  it('from the CLI as a user who may not write the file: reads exit 0, writes exit 4 (skipped where no unprivileged user can be had)', async (ctx) => {
    const path = copyOf('ro-cli.db');
    chmodSync(path, 0o444);
    // As root, chmod does not stop writes; run the CLI as "nobody" instead (uid 65534), which root may do.
    const uid = process.getuid?.() === 0 ? 65534 : undefined;
    const [show, write] = await Promise.all([
      run(['show', 'film@1', '--db', path], { uid }),
      run(['approve', 'film@2', '--db', path, '--as', 'bob'], { uid }),
    ]);
    if (show.code !== 0 && !/film@1/.test(show.err)) return ctx.skip(`cannot run the CLI as uid ${uid}: ${show.err.slice(0, 200)}`);
    expect(show.code, show.err).toBe(0);
    expect(show.out).toMatch(/film@1\s+approved/);
    expect(write.code).toBe(4);
    expect(write.err).toMatch(/read-only.*nothing was written \[registry-read-only\]/);
    expect(write.err).not.toMatch(/internal error|\n\s+at /);
  });

  it('in WAL mode in a folder the user may not write: reads exit 0, writes exit 4; a -wal with changes there is refused clearly (exit 4)', async (ctx) => {
    const uid = process.getuid?.() === 0 ? 65534 : undefined;
    if (uid === undefined) return ctx.skip('needs root, to run the CLI as an unprivileged user who may not write the folder');
    const probe = await run(['--version'], { uid });
    if (probe.code !== 0) return ctx.skip(`cannot run the CLI as uid ${uid}: ${probe.err.slice(0, 200)}`);
    const folder = join(dir, 'read-only-folder');
    mkdirSync(folder, { mode: 0o755 }); // owned by root: uid 65534 may read, not create files
    const path = join(folder, 'wal.db');
    copyFileSync(base, path);
    const wal = new Database(path);
    wal.pragma('journal_mode = WAL'); // closing checkpoints and removes -wal and -shm: only the main file stays
    wal.close();
    chmodSync(path, 0o644);
    expect(existsSync(`${path}-shm`)).toBe(false);
    const [show, evaluated, verified, write] = await Promise.all([
      run(['show', 'film@1', '--db', path], { uid }),
      run(['eval', 'film@1', '--at', '500', '--json', '--db', path], { uid }),
      run(['verify', '--db', path], { uid }),
      run(['approve', 'film@2', '--db', path, '--as', 'bob'], { uid }),
    ]);
    expect(show.code, show.err).toBe(0);
    expect(show.out).toMatch(/film@1\s+approved/);
    expect(evaluated.code, evaluated.err).toBe(0);
    expect(JSON.parse(evaluated.out)).toMatchObject({ ref: 'film@1', wavelength_nm: [500] });
    expect(verified.code, verified.err).toBe(0);
    expect(write.code).toBe(4);
    expect(write.err).toMatch(/read-only.*folder.*nothing was written \[registry-read-only\]/);
    expect(existsSync(`${path}-shm`) || existsSync(`${path}-wal`)).toBe(false);

    // A writer's -wal copied along without its -shm: the main file alone would be stale, so it is not served.
    const live = join(dir, 'live.db');
    copyFileSync(base, live);
    const writer = new Database(live);
    try {
      writer.pragma('journal_mode = WAL');
      writer.pragma('wal_autocheckpoint = 0');
      writer.exec('CREATE TABLE scratch (x); INSERT INTO scratch VALUES (1)');
      copyFileSync(live, join(folder, 'stale.db'));
      copyFileSync(`${live}-wal`, join(folder, 'stale.db-wal'));
    } finally {
      writer.close();
    }
    const stale = await run(['show', 'film@1', '--db', join(folder, 'stale.db')], { uid });
    expect(stale.code).toBe(4);
    expect(stale.err).toMatch(/stale\.db-wal holds changes not yet in the main file.*nothing was written\) \[registry-read-only\]/);
  });

  it('over HTTP: reads 200, writes 503 registry-read-only', async () => {
    const registry = await openRegistry(copyOf('ro-api.db'), { readonly: true });
    const server = await startServer({ registry, host: '127.0.0.1', port: 0, logEnvironment: () => {} });
    try {
      expect((await fetch(`${server.url}/api/v1/materials/film/versions/1`)).status).toBe(200);
      const res = await fetch(`${server.url}/api/v1/materials/film/versions/2/withdraw`, { method: 'POST', headers: approver });
      expect(res.status).toBe(503);
      expect(await res.json()).toMatchObject({ rule: 'registry-read-only', status: 503 });
    } finally {
      await server.close();
      await registry.close();
    }
  });
});

/** Overwrite `count` bytes at `offset` of the file. */
function overwrite(path: string, offset: number, bytes: Buffer): void {
  const fd = openSync(path, 'r+');
  try {
    writeSync(fd, bytes, 0, bytes.length, offset);
  } finally {
    closeSync(fd);
  }
}

function rootPage(path: string, name: string): { page: number; size: number } {
  const db = new Database(path, { readonly: true });
  try {
    const { rootpage } = db.prepare('SELECT rootpage FROM sqlite_master WHERE name = ?').get(name) as { rootpage: number };
    return { page: rootpage, size: (db.pragma('page_size') as { page_size: number }[])[0].page_size };
  } catch (err) {
    throw err;
  } finally {
    db.close();
  }
}

describe('a corrupted database file', () => {
  it("a damaged index page: verify runs SQLite's integrity check and fails (exit 3), naming its findings", async () => {
    const path = copyOf('corrupt-index.db');
    const { page, size } = rootPage(path, 'audit_log_hash');
    overwrite(path, (page - 1) * size + 12, Buffer.from('0777'.repeat(6), 'hex')); // the cell pointer array
    const r = await run(['verify', '--db', path]);
    expect(r.code, r.err).toBe(3);
    expect(r.err).toMatch(/FAIL {2}integrity_check: /);
    expect(r.err).not.toMatch(/internal error/);
  });

  it('a damaged table page header: every command, verify included, exits 4 "corrupt" naming the file', async () => {
    const path = copyOf('corrupt-table.db');
    const { page, size } = rootPage(path, 'material_versions');
    overwrite(path, (page - 1) * size, Buffer.concat([Buffer.from([0x0d]), Buffer.alloc(7, 0xff), Buffer.alloc(200, 0xab)]));
    const commands = [['verify'], ['show', 'film@1'], ['approve', 'film@2', '--as', 'bob']];
    const results = await Promise.all(commands.map((args) => run([...args, '--db', path])));
    for (const [i, args] of commands.entries()) {
      const r = results[i];
      expect(r.code, `${args[0]}: ${r.err}`).toBe(4);
      expect(r.err).toContain(`registry ${path}: the database file is corrupt`);
      expect(r.err).toMatch(/\[registry-corrupt\]/);
      expect(r.err).not.toMatch(/internal error|\n\s+at /);
    }
  });
});

describe('a registry file removed or replaced under a running server', () => {
  it('refuses writes with a clear problem and logs it; the path is served again after a restart', async () => {
    const path = copyOf('replaced.db');
    const registry = await openRegistry(path);
    const logged: string[] = [];
    const server = await startServer({ registry, host: '127.0.0.1', port: 0, logEnvironment: (f) => logged.push(f.describe()) });
    const withdraw = (n: number) => fetch(`${server.url}/api/v1/materials/film/versions/${n}/withdraw`, { method: 'POST', headers: approver });
    try {
      expect((await withdraw(2)).status).toBe(200);
      // A restore copies another file over the path (rename onto it, as cp to a temp name + mv does).
      copyFileSync(base, `${path}.restore`);
      renameSync(`${path}.restore`, path);
      const replaced = await withdraw(3);
      expect(replaced.status).toBe(503);
      const problem = await replaced.json();
      expect(problem).toMatchObject({ rule: 'registry-replaced', status: 503 });
      expect(problem.detail).toMatch(/removed or replaced.*nothing was written/);
      expect(logged).toEqual([expect.stringMatching(/\[registry-replaced\]/)]);
      // Removed altogether: the same.
      rmSync(path);
      expect((await withdraw(4)).status).toBe(503);
    } finally {
      await server.close();
      await registry.close();
    }
  });

  it('at the service level, before each write (one stat of the path)', async () => {
    const path = copyOf('moved.db');
    const registry = await openRegistry(path);
    try {
      renameSync(path, `${path}.moved`);
      await expect(approve(registry, 'film@2', 'bob')).rejects.toThrow(expect.objectContaining({ rule: 'registry-replaced' }));
      renameSync(`${path}.moved`, path); // back under its name: the same file again, writes resume
      expect((await approve(registry, 'film@2', 'bob')).status).toBe('approved');
    } finally {
      await registry.close();
    }
  });
});

describe('a registry path that names nothing', () => {
  it('read commands refuse it, naming the path, exit 2, and create nothing', async () => {
    const typo = join(dir, 'typo.db');
    const lock = join(dir, 'design.nklock.json');
    const commands = [
      ['verify'],
      ['show', 'film@1'],
      ['lock', 'add', 'film@1', '--lock', lock],
      ['backup', join(dir, 'b.db')],
      ['token', 'list'],
      ['approve', 'film@1', '--as', 'bob'],
    ];
    const results = await Promise.all(commands.map((args) => run([...args, '--db', typo])));
    for (const [i, args] of commands.entries()) {
      const r = results[i];
      expect(r.code, `${args.join(' ')}: ${r.err}`).toBe(2);
      expect(r.err).toContain(`${typo}: no registry database at this path`);
      expect(r.err).toMatch(/\[registry-missing\]/);
      expect(existsSync(typo), args.join(' ')).toBe(false);
    }
    expect(existsSync(lock)).toBe(false);
  });

  it('material add creates one only inside an existing folder, and says so', async () => {
    const fresh = join(dir, 'fresh.db');
    const nowhere = join(dir, 'no-such-folder', 'lab.db');
    const [made, refused] = await Promise.all([
      run(['material', 'add', 'glass', '--name', 'Glass', '--db', fresh]),
      run(['material', 'add', 'glass', '--name', 'Glass', '--db', nowhere]),
    ]);
    expect(made.code, made.err).toBe(0);
    expect(made.err).toContain(`created a new registry at ${fresh}`);
    const again = await run(['material', 'add', 'glass2', '--name', 'Glass 2', '--db', fresh]);
    expect(again.code, again.err).toBe(0);
    expect(again.err).not.toMatch(/created a new registry/);
    expect(refused.code).toBe(2);
    expect(refused.err).toMatch(/no folder .*no-such-folder.*\[registry-folder-missing\]/);
    expect(existsSync(join(dir, 'no-such-folder'))).toBe(false);
  });
});
