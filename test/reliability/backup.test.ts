/**
 * Backup under concurrent writes: two writer processes (crash-writer.ts) keep importing, approving and
 * retiring while `backup` runs — the CLI command (a separate process, as a lab would run it from cron) and
 * the service function. Each backup must open, pass verify (hashes, numbering, triggers), pass the same
 * invariants as after a crash, and hold every version committed before the backup began, with the same
 * hash. Restore is "copy the backup file to the database path": checked by restoring and writing on.
 * (SQLite online backup API: sqlite.org/backup.html.)
 */
import { spawn } from 'node:child_process';
import { copyFileSync, mkdtempSync, rmSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { createInterface } from 'node:readline';
import { afterAll, describe, expect, it } from 'vitest';
import { backup, createMaterial, importVersion, openRegistry, verifyRegistry } from '../../src/service/registry.ts';
import { checkRegistryFile } from './invariants.ts';
import { cli } from './processes.ts';

export const BACKUPS = { cli: 2, service: 3 } as const;
/** Writers pause this long between writes: still many commits per backup, but the file stays small enough to verify quickly. */
const WRITER_PAUSE_MS = 5;
/** Backups start once the file holds this many versions (≈ 2 MB, many more pages than one 100-page backup step). */
const MIN_VERSIONS = 150;
const WRITER = new URL('./crash-writer.ts', import.meta.url).pathname;
const dir = mkdtempSync(join(tmpdir(), 'nkledger-backup-'));
const db = join(dir, 'live.db');
afterAll(() => rmSync(dir, { recursive: true, force: true }));

function startWriter(seed: number) {
  const child = spawn(process.execPath, ['--import', 'tsx', WRITER, db, String(seed), String(WRITER_PAUSE_MS)], { stdio: 'pipe' });
  let imports = 0;
  let err = '';
  child.stderr.on('data', (d) => (err += d));
  const ready = new Promise<void>((resolve) => {
    createInterface({ input: child.stdout }).on('line', (line) => {
      if (line === 'loaded') child.stdin.write('go\n');
      if (line === 'ready') resolve();
      if (line.startsWith('import ')) imports++;
    });
  });
  return { child, ready, imports: () => imports, stderr: () => err };
}

/** Every version committed now: ref → sha256 (one read transaction). */
async function committedVersions(): Promise<Map<string, string>> {
  const r = await openRegistry(db);
  try {
    const rows = r.sqlite
      .prepare("SELECT m.slug || '@' || v.number AS ref, v.sha256 FROM material_versions v JOIN materials m ON m.id = v.material_id")
      .all() as { ref: string; sha256: string }[];
    return new Map(rows.map((row) => [row.ref, row.sha256]));
  } finally {
    await r.close();
  }
}

async function expectHolds(backupFile: string, before: Map<string, string>): Promise<number> {
  const { problems, versions } = await checkRegistryFile(backupFile);
  expect(problems, backupFile).toEqual([]);
  for (const [ref, sha] of before) expect(versions.get(ref)?.sha256, `${ref} in ${backupFile}`).toBe(sha);
  return versions.size;
}

describe('backup while two processes keep writing', { timeout: 120_000 }, () => {
  it(`${BACKUPS.cli} CLI and ${BACKUPS.service} service backups open, verify and hold everything committed before they began`, async () => {
    // The first writer creates the materials; the second joins when the file exists.
    const first = startWriter(101);
    await first.ready;
    const second = startWriter(202);
    await second.ready;
    const sizes: number[] = [];
    while ((await committedVersions()).size < MIN_VERSIONS) await new Promise((r) => setTimeout(r, 100));
    try {
      for (let i = 0; i < BACKUPS.service; i++) {
        await new Promise((r) => setTimeout(r, 150));
        const before = await committedVersions();
        const file = join(dir, `service-${i}.db`);
        const live = await openRegistry(db);
        try {
          await backup(live, file);
        } finally {
          await live.close();
        }
        sizes.push(await expectHolds(file, before));
      }
      for (let i = 0; i < BACKUPS.cli; i++) {
        const before = await committedVersions();
        const file = join(dir, `cli-${i}.db`);
        const r = await cli(['backup', file, '--json', '--db', db], 'backup-operator');
        expect(r.code, r.err).toBe(0);
        sizes.push(await expectHolds(file, before));
      }
      // And the CLI's own verify agrees (on the last one; expectHolds ran verifyRegistry on all of them).
      const v = await cli(['verify', '--db', join(dir, `cli-${BACKUPS.cli - 1}.db`), '--json'], 'backup-operator');
      expect(v.code, v.err).toBe(0);
      expect(JSON.parse(v.out)).toMatchObject({ ok: true, mismatches: [], missing_versions: [], missing_triggers: [] });
      // The writers were really writing throughout: the live file grew past every backup.
      expect(first.imports() + second.imports()).toBeGreaterThan(Math.max(...sizes) / 2);
    } finally {
      first.child.kill('SIGKILL');
      second.child.kill('SIGKILL');
    }
    expect(first.stderr() + second.stderr()).toBe('');
    console.log(
      `backup: ${sizes.length} backups under 2 writers (${sizes.join(', ')} versions each), live file ${(await committedVersions()).size} versions after`,
    );
  });

  it('finishes even when another connection commits between every step of the copy', async () => {
    // SQLite restarts an online backup whose source another connection changed between steps; copied in
    // 100-page steps (better-sqlite3's default), a registry written to steadily was never backed up.
    const file = join(dir, 'steady.db');
    const source = await openRegistry(file);
    const writer = await openRegistry(file);
    try {
      await createMaterial(writer, { slug: 'steady', name: 'Steady writes' }, 'ada');
      const big = (i: number) => ({
        wavelengthNm: Array.from({ length: 400 }, (_, j) => 300 + j),
        n: Array.from({ length: 400 }, (_, j) => 1.5 + i * 1e-6 + j * 1e-5),
        k: Array.from({ length: 400 }, () => 0),
      });
      for (let i = 0; i < 60; i++) await importVersion(writer, { slug: 'steady', table: big(i) }, 'ada');
      let writes = 60;
      let copying = true;
      const writeBetweenSteps = async () => {
        if (!copying) return;
        await importVersion(writer, { slug: 'steady', table: big(++writes) }, 'ada');
        setImmediate(writeBetweenSteps);
      };
      setImmediate(writeBetweenSteps);
      const target = join(dir, 'steady-backup.db');
      const outcome = await Promise.race([
        backup(source, target).then(() => 'done'),
        new Promise((r) => setTimeout(() => r('still copying after 10 s'), 10_000)),
      ]);
      copying = false;
      expect(outcome).toBe('done');
      expect(await expectHolds(target, new Map())).toBeGreaterThanOrEqual(60);
    } finally {
      await source.close();
      await writer.close();
    }
  });

  it('restore = copy the backup file to the database path; the restored registry verifies and takes new versions', async () => {
    const restored = join(dir, 'restored.db');
    copyFileSync(join(dir, `cli-${BACKUPS.cli - 1}.db`), restored);
    const r = await openRegistry(restored);
    try {
      expect((await verifyRegistry(r)).ok).toBe(true);
      await createMaterial(r, { slug: 'after-restore', name: 'Written after the restore' }, 'ada');
      const v = await importVersion(r, { slug: 'after-restore', table: { wavelengthNm: [400, 500], n: [1.5, 1.49], k: [0, 0] } }, 'ada');
      expect(v.ref).toBe('after-restore@1');
      expect((await verifyRegistry(r)).ok).toBe(true);
    } finally {
      await r.close();
    }
  });
});
