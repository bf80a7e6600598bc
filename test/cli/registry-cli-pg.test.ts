/**
 * The registry commands end to end with `--db postgres://…` (in-process, test/cli/run-cli.ts), on a fresh database of
 * the run's throw-away server (test/postgres-global-setup.ts): adding, importing, two-person approval, showing,
 * evaluating, listing, history and verify; verify finding a tampered content row (exit 3) and a dropped or disabled
 * trigger; backup refused with advice (exit 2); an unreachable server (exit 4, password masked). Skipped with a plain
 * message where PostgreSQL 15+ is not installed.
 */
import { mkdtempSync, rmSync, writeFileSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import pg from 'pg';
import { afterAll, beforeAll, describe, expect, inject, it } from 'vitest';
import { createDatabase } from '../helpers/postgres.ts';
import { freshPostgresUrl } from '../registry/helpers.ts';
import { runCli } from './run-cli.ts';

const server = inject('postgres');
if (!server.adminUrl) console.warn(server.missing);

let dir: string;
let db: string;

async function run(args: string[], user = 'ada') {
  const r = await runCli([...args, '--db', db], { env: { NKLEDGER_USER: user, NKLEDGER_DB: '' } });
  return { code: r.code, out: r.stdout, err: r.stderr };
}

/** Raw SQL on the test database as its owner (the superuser of the throw-away server): what a tamperer could do. */
async function asOwner(text: string): Promise<void> {
  const client = new pg.Client({ connectionString: db });
  await client.connect();
  try {
    await client.query(text);
  } finally {
    await client.end();
  }
}

/** A small invented table (n = 1.45 + 0.0036/λ², k = 0) with a per-file offset so each import differs. */
function writeTable(name: string, offset: number): string {
  const rows = Array.from({ length: 21 }, (_, i) => 400 + 20 * i).map((w) => `${w},${(1.45 + offset + 0.0036 / (w / 1000) ** 2).toFixed(6)},0`);
  const path = join(dir, name);
  writeFileSync(path, `wavelength_nm,n,k\n${rows.join('\n')}\n`);
  return path;
}

describe.skipIf(!server.adminUrl)(`registry CLI on PostgreSQL${server.adminUrl ? '' : ` (${server.missing})`}`, { timeout: 120_000 }, () => {
  beforeAll(async () => {
    dir = mkdtempSync(join(tmpdir(), 'nkledger-cli-pg-'));
    db = await freshPostgresUrl();
  });
  afterAll(() => rmSync(dir, { recursive: true, force: true }));

  it('adds, imports, approves by two people, shows, evaluates, lists, verifies and refuses a backup', async () => {
    expect((await run(['material', 'add', 'sio2-thermal', '--name', 'Thermal oxide', '--tag', 'oxide'])).code).toBe(0);
    expect((await run(['material', 'add', 'sio2-wet', '--name', 'Wet oxide'])).code).toBe(0);
    const lookAlike = await run(['material', 'add', 'si02-thermal', '--name', 'Another oxide']);
    expect(lookAlike.code).toBe(2);
    const imported = await run(['import', writeTable('a.csv', 0), '--material', 'sio2-thermal', '--no-kk', '--meta', 'method=se', '--json']);
    expect(imported.code).toBe(0);
    const v1 = JSON.parse(imported.out);
    expect(v1).toMatchObject({ ref: 'sio2-thermal@1', status: 'draft' });
    const second = JSON.parse((await run(['import', writeTable('b.csv', 0.01), '--material', 'sio2-thermal', '--no-kk', '--json'])).out);
    expect(second.ref).toBe('sio2-thermal@2');

    const self = await run(['approve', 'sio2-thermal@1']);
    expect(self.code).toBe(2);
    expect(self.err).toMatch(/cannot also approve it.*\[two-person-rule\]/);
    expect((await run(['approve', 'sio2-thermal@1', '--as', 'bob'])).code).toBe(0);

    const shown = await run(['show', 'sio2-thermal', '--json']);
    expect(shown.code).toBe(0);
    expect(JSON.parse(shown.out)).toMatchObject({ ref: 'sio2-thermal@1', status: 'approved', sha256: v1.sha256, approved_by: 'bob' });
    const byHash = await run(['show', `sio2-thermal@sha256:${v1.sha256.slice(0, 10).toUpperCase()}`, '--json']);
    expect(JSON.parse(byHash.out).ref).toBe('sio2-thermal@1');

    // n = 1.45 + 0.0036/0.5² = 1.4644 at 500 nm (the table's own row).
    const evaluated = await run(['eval', 'sio2-thermal@1', '--at', '500', '--json']);
    if (evaluated.code !== 0) throw new Error(evaluated.err);
    expect(evaluated.code).toBe(0);
    expect(evaluated.out).toMatch(/1\.4644/);

    const listed = await run(['list', '--json']);
    expect(JSON.parse(listed.out).map((m: { slug: string }) => m.slug)).toEqual(['sio2-thermal', 'sio2-wet']);
    const history = await run(['history', 'sio2-thermal']);
    expect(history.out).toMatch(/version\.approve/);

    const verified = await run(['verify', '--json']);
    expect(verified.code).toBe(0);
    const report = JSON.parse(verified.out);
    expect(report).toMatchObject({ ok: true, backend: 'postgres', checked_versions: 2 });
    expect(report.not_applicable.map((n: { check: string }) => n.check)).toEqual(['integrity_check', 'file_identity']);
    const plain = await run(['verify']);
    expect(plain.err).toMatch(/n\/a   integrity_check \(not on PostgreSQL\): SQLite.s check of its file.s pages/);

    const backup = await run(['backup', join(dir, 'copy.db')]);
    expect(backup.code).toBe(2);
    expect(backup.err).toMatch(/pg_dump/);
    expect(backup.err).toMatch(/base backup/);
    expect(backup.err).toMatch(/\[backup-postgres\]/);
  });

  it('verify finds a tampered content row and a dropped or disabled trigger (exit 3)', async () => {
    // The trigger refuses the edit even to the owner…
    await expect(asOwner("UPDATE material_versions SET content = replace(content, '1.4', '1.5') WHERE number = 2")).rejects.toThrow(
      /version content, provenance and identity are immutable/,
    );
    // …until it is switched off, which verify reports as well as the edit it let through.
    await asOwner('ALTER TABLE material_versions DISABLE TRIGGER material_versions_content_immutable');
    await asOwner("UPDATE material_versions SET content = replace(content, '1.4', '1.5') WHERE number = 2");
    const tampered = await run(['verify']);
    expect(tampered.code).toBe(3);
    expect(tampered.err).toMatch(/sio2-thermal@2: .*stored/);
    expect(tampered.err).toMatch(/trigger material_versions_content_immutable is disabled/);
    await asOwner('DROP TRIGGER materials_no_delete ON materials');
    const dropped = await run(['verify', '--json']);
    expect(dropped.code).toBe(3);
    expect(JSON.parse(dropped.out).missing_triggers).toContain('materials_no_delete');
  });

  it('a read command refuses a database without a registry; material add creates one there', async () => {
    const empty = await createDatabase(server.adminUrl as string);
    const listed = await runCli(['list', '--db', empty], { env: { NKLEDGER_DB: '' } });
    expect(listed.code).toBe(2);
    expect(listed.stderr).toMatch(/no registry in this database.*\[registry-missing\]/);
    const added = await runCli(['material', 'add', 'mgf2-film', '--name', 'MgF2', '--db', empty], { env: { NKLEDGER_DB: '', NKLEDGER_USER: 'ada' } });
    expect(added.code).toBe(0);
    expect(added.stderr).toMatch(/created a new registry at postgres:/);
    expect((await runCli(['list', '--db', empty], { env: { NKLEDGER_DB: '' } })).code).toBe(0);
  });

  it('an unreachable server is an environment fault (exit 4) naming the URL without its password', async () => {
    const url = new URL(db);
    url.password = 's3cret';
    url.port = '1';
    const r = await runCli(['list', '--db', url.toString()], { env: { NKLEDGER_DB: '' } });
    expect(r.code).toBe(4);
    expect(r.stderr).toMatch(/registry-unreachable/);
    expect(r.stderr).toContain(':***@127.0.0.1:1/');
    expect(r.stderr).not.toContain('s3cret');
  });

  it('a database that does not exist is registry-database-missing (exit 4)', async () => {
    const url = new URL(db);
    url.pathname = '/nkledger_no_such_database';
    const r = await runCli(['material', 'add', 'x-film', '--name', 'X', '--db', url.toString()], { env: { NKLEDGER_DB: '' } });
    expect(r.code).toBe(4);
    expect(r.stderr).toMatch(/registry-database-missing/);
  });
});
