/**
 * The registry commands end to end on a temp database: in-process (test/cli/run-cli.ts), and as real processes of
 * bin/nkledger.js where several processes share one database.
 */
import { execFile } from 'node:child_process';
import { mkdtempSync, readFileSync, rmSync, writeFileSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { promisify } from 'node:util';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { openRegistry, verifyRegistry } from '../../src/service/registry.ts';
import { runCli } from './run-cli.ts';

const BIN = new URL('../../bin/nkledger.js', import.meta.url).pathname;
const execFileAsync = promisify(execFile);
let dir: string;
let db: string;

async function run(args: string[], user = 'ada') {
  const r = await runCli([...args, '--db', db], { env: { NKLEDGER_USER: user, NKLEDGER_DB: '' } });
  return { code: r.code, out: r.stdout, err: r.stderr };
}

/** A small invented table (n = 1.45 + 0.0036/λ², k = 0) with a per-file offset so each import differs. */
function writeTable(name: string, offset: number): string {
  const rows = Array.from({ length: 21 }, (_, i) => 400 + 20 * i).map((w) => `${w},${(1.45 + offset + 0.0036 / (w / 1000) ** 2).toFixed(6)},0`);
  const path = join(dir, name);
  writeFileSync(path, `wavelength_nm,n,k\n${rows.join('\n')}\n`);
  return path;
}

beforeAll(() => {
  dir = mkdtempSync(join(tmpdir(), 'nkledger-cli-'));
  db = join(dir, 'lab.db');
});
afterAll(() => rmSync(dir, { recursive: true, force: true }));

describe('registry CLI', { timeout: 240_000 }, () => {
  it('runs a material through import, two-person approval, lock, retire, verify and backup', async () => {
    expect((await run(['material', 'add', 'sio2-thermal', '--name', 'Thermal oxide', '--tag', 'oxide'])).code).toBe(0);
    const imported = await run([
      'import',
      writeTable('a.csv', 0),
      '--material',
      'sio2-thermal',
      '--no-kk',
      '--meta',
      'method=se',
      'angles=65,70',
      '--note',
      'wafer 3',
      '--json',
    ]);
    expect(imported.code).toBe(0);
    const v1 = JSON.parse(imported.out);
    expect(v1).toMatchObject({ ref: 'sio2-thermal@1', status: 'draft' });
    expect(v1.sha256).toMatch(/^[0-9a-f]{64}$/);

    const self = await run(['approve', 'sio2-thermal@1']);
    expect(self.code).toBe(2);
    expect(self.err).toMatch(/cannot also approve it.*\[two-person-rule\]/);
    expect(self.err).not.toMatch(/at .*\.ts/); // no stack trace
    expect((await run(['approve', 'sio2-thermal@1', '--as', 'bob'])).code).toBe(0);

    const shown = await run(['show', 'sio2-thermal', '--json']);
    expect(JSON.parse(shown.out)).toMatchObject({
      ref: 'sio2-thermal@1',
      status: 'approved',
      sha256: v1.sha256,
      approved_by: 'bob',
      provenance: { notes: 'wafer 3', angles_deg: [65, 70] },
    });
    expect(shown.err).toMatch(/not a pin/);

    const lock = join(dir, 'design.nklock.json');
    expect((await run(['lock', 'add', 'sio2-thermal@1', '--lock', lock])).code).toBe(0);
    expect(JSON.parse(readFileSync(lock, 'utf8')).materials['sio2-thermal']).toMatchObject({ version: 1, sha256: v1.sha256 });
    expect((await run(['lock', 'verify', '--lock', lock])).code).toBe(0);

    expect((await run(['retire', 'sio2-thermal@1', '--reason', 'wrong substrate model', '--as', 'bob'])).code).toBe(0);
    const relaxed = await run(['lock', 'verify', '--lock', lock]);
    expect(relaxed.code).toBe(0);
    expect(relaxed.out).toMatch(/warn  sio2-thermal@1 is retired: wrong substrate model/); // entries on stdout
    expect(relaxed.err).toMatch(/^lockfile ok: 1 entries, 1 warning/); // the summary on stderr
    const strict = await run(['lock', 'verify', '--lock', lock, '--strict', '--json']);
    expect(strict.code).toBe(3);
    expect(JSON.parse(strict.out).entries[0]).toMatchObject({ outcome: 'retired', failed: true });

    const history = JSON.parse((await run(['history', 'sio2-thermal', '--json'])).out);
    expect(history.audit.map((a: { action: string; actor: string }) => `${a.action}:${a.actor}`)).toEqual([
      'material.create:ada',
      'version.import:ada',
      'version.approve:bob',
      'version.retire:bob',
    ]);
    expect(JSON.parse((await run(['list', '--json'])).out)[0]).toMatchObject({ slug: 'sio2-thermal', versions: 1, latest_approved: null });

    const backupFile = join(dir, 'backup.db');
    expect((await run(['backup', backupFile])).code).toBe(0);
    expect((await run(['backup', backupFile])).code).toBe(2); // never overwrites
    const verified = await runCli(['verify', '--db', backupFile, '--json']);
    expect(verified.code).toBe(0);
    expect(JSON.parse(verified.stdout)).toMatchObject({ ok: true, checked_versions: 1 });
  });

  it('refuses to change an approved version through the CLI and catches raw-SQL edits with verify', async () => {
    await run(['material', 'add', 'mgf2', '--name', 'MgF2']);
    await run(['import', writeTable('m.csv', -0.07), '--material', 'mgf2', '--no-kk']);
    expect((await run(['approve', 'mgf2@1'], 'bob')).code).toBe(0);
    expect((await run(['approve', 'mgf2@1'], 'cy')).err).toMatch(/it is approved/);
    expect((await run(['withdraw', 'mgf2@1'], 'cy')).err).toMatch(/it is approved/);
    expect((await run(['import', join(dir, 'm.csv'), '--material', 'mgf2', '--no-kk'])).err).toMatch(/already stored as mgf2@1/);

    const registry = await openRegistry(db);
    try {
      expect(() => registry.sqlite.exec("UPDATE material_versions SET content = '{}'")).toThrow(/immutable/);
      registry.sqlite.exec('DROP TRIGGER material_versions_content_immutable');
      registry.sqlite.exec(
        "UPDATE material_versions SET notes = 'edited by hand' WHERE number = 1 AND material_id = (SELECT id FROM materials WHERE slug = 'mgf2')",
      );
      expect((await verifyRegistry(registry)).ok).toBe(false);
    } finally {
      await registry.close();
    }
    const v = await run(['verify']);
    expect(v.code).toBe(3);
    expect(v.err).toMatch(/FAIL {2}mgf2@1: content or provenance no longer matches its SHA-256/);
    expect(v.err).toMatch(/trigger material_versions_content_immutable is missing/);
  });
});

describe('registry versions as sources', { timeout: 240_000 }, () => {
  it('eval, diff and export take references (runs after the flows above)', async () => {
    const e = await run(['eval', 'sio2-thermal@1', '--at', '500', '--json']);
    expect(e.code).toBe(0);
    // the written table: n = 1.45 + 0.0036/0.5² at 500 nm (a table point), from writeTable above
    expect(JSON.parse(e.out)).toMatchObject({ ref: 'sio2-thermal@1', source: 'table', wavelength_nm: [500], n: [1.4644] });
    expect(e.err).toMatch(/retired/);
    expect((await run(['eval', 'sio2-thermal@1', '--at', '900'])).err).toMatch(/never extrapolated/);
    expect((await run(['eval', 'sio2-thermal@1', '--at', '900', '--extrapolate'])).err).toMatch(
      /a table never extrapolates \[table-no-extrapolation\]/,
    );
    // mgf2@1 was edited by hand above: it is refused on read (re-verified hash), not diffed as if good.
    expect((await run(['diff', 'sio2-thermal@1', 'mgf2@1', '--json'])).err).toMatch(
      /mgf2@1: the stored content .* no longer matches .*\[integrity-hash-mismatch\]/,
    );
    await run(['material', 'add', 'mgf2-b', '--name', 'MgF2 (second sample)']);
    await run(['import', writeTable('m2.csv', -0.07), '--material', 'mgf2-b', '--no-kk']);
    const d = await run(['diff', 'sio2-thermal@1', 'mgf2-b@1', '--json']);
    expect(d.code).toBe(0);
    // mgf2-b was written with offset -0.07: Δn = -0.07 everywhere
    expect(JSON.parse(d.out).dn.max_abs).toBeCloseTo(0.07, 6);
    const csv = await run(['export', 'sio2-thermal@1', '--format', 'csv']);
    expect(csv.out.split('\r\n').slice(2, 4)).toEqual(['wavelength_nm,n,k', '400,1.4725,0']);
  });
});

describe('several processes importing into one database at once', { timeout: 240_000 }, () => {
  it('get distinct, hole-free version numbers and lose nothing', async () => {
    const concurrentDb = join(dir, 'concurrent.db');
    const env = { ...process.env, NKLEDGER_USER: 'ada', NKLEDGER_DB: concurrentDb };
    // the first writer creates the database; the importers then race on a fresh material
    await execFileAsync(process.execPath, [BIN, 'material', 'add', 'race', '--name', 'race'], { env });
    const count = 6;
    const files = Array.from({ length: count }, (_, i) => writeTable(`race-${i}.csv`, 0.001 * (i + 1)));
    const results = await Promise.all(
      files.map((file) => execFileAsync(process.execPath, [BIN, 'import', file, '--material', 'race', '--no-kk', '--json'], { env })),
    );
    const refs = results.map((r) => JSON.parse(r.stdout).ref as string);
    expect(new Set(refs).size).toBe(count);
    expect(refs.map((r) => Number(r.split('@')[1])).sort((a, b) => a - b)).toEqual([1, 2, 3, 4, 5, 6]);
    const registry = await openRegistry(concurrentDb);
    try {
      const rows = registry.sqlite.prepare('SELECT number, source_file FROM material_versions ORDER BY number').all() as {
        number: number;
        source_file: string;
      }[];
      expect(rows.map((r) => r.source_file).sort()).toEqual(files.map((f) => f.split('/').pop()).sort());
      const audit = registry.sqlite.prepare("SELECT count(*) AS n FROM audit_log WHERE action = 'version.import'").get() as { n: number };
      expect(audit.n).toBe(count);
      expect((await verifyRegistry(registry)).ok).toBe(true);
    } finally {
      await registry.close();
    }
  });

  it('creates and migrates a brand-new database written by several processes at once, with one audit chain', async () => {
    const freshDb = join(dir, 'fresh.db');
    const env = { ...process.env, NKLEDGER_DB: freshDb, NKLEDGER_USER: 'ada' };
    await Promise.all(
      Array.from({ length: 4 }, (_, i) =>
        execFileAsync(process.execPath, [BIN, 'material', 'add', `film-${i}`, '--name', `Film ${i}`, '--json'], { env }),
      ),
    );
    const listed = await execFileAsync(process.execPath, [BIN, 'list', '--json'], { env });
    expect(JSON.parse(listed.stdout).map((m: { slug: string }) => m.slug)).toEqual(['film-0', 'film-1', 'film-2', 'film-3']);
    const verified = await execFileAsync(process.execPath, [BIN, 'verify', '--json'], { env });
    expect(JSON.parse(verified.stdout)).toMatchObject({ ok: true, chain: { head: { sequence: 5 } } });
  });
});
