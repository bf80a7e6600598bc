/**
 * Tampering with the database file itself: with the immutability triggers dropped, a version's content,
 * its provenance, its stored hash and (worse) its JSON are edited by raw SQL. `verify` must name each, and
 * every read path — service, HTTP API, CLI show/eval/export/diff — must refuse to serve a version whose
 * content no longer matches its SHA-256, while untouched versions are still served. (Content addressing
 * by SHA-256, FIPS 180-4; refuse-on-mismatch is common practice for content-addressed stores.)
 * Also: API tokens are stored only as hashes (the plaintext is nowhere in the file or its WAL).
 */
import Database from 'better-sqlite3';
import { existsSync, mkdtempSync, readFileSync, rmSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { IntegrityError } from '../../src/errors.ts';
import { startServer, type RunningServer } from '../../src/api/server.ts';
import {
  approve,
  canonicalJson,
  createMaterial,
  diffVersions,
  evaluateVersion,
  exportVersion,
  importVersion,
  IMMUTABILITY_TRIGGERS,
  openRegistry,
  sha256Hex,
  showVersion,
  verifyRegistry,
  lockAdd,
  emptyLockfile,
  writeLockfile,
  type Lockfile,
  type Registry,
} from '../../src/service/registry.ts';
import { createToken, revokeToken } from '../../src/service/tokens.ts';
import { cauchyTable } from '../registry/helpers.ts';
import { cli } from './processes.ts';

const dir = mkdtempSync(join(tmpdir(), 'nkledger-tamper-'));
const db = join(dir, 'tamper.db');
let registry: Registry;
let server: RunningServer;
/** The n,k answer for tamper@1 served (and cached) before anyone touched the file. */
let nkBefore: string;
/** A design's lockfile pinning tamper@1 and intact@1, written before the attack. */
let lockfile: Lockfile;
const lockPath = join(dir, 'design.nklock.json');
const TAMPERED = ['tamper@1', 'tamper@2', 'tamper@3', 'tamper@4'];
const nkPath = (ref: string) => `/api/v1/materials/${ref.replace('@', '/versions/')}/nk?wavelengths_nm=500,600`;

beforeAll(async () => {
  registry = await openRegistry(db);
  await createMaterial(registry, { slug: 'tamper', name: 'Tampered' }, 'ada');
  await createMaterial(registry, { slug: 'intact', name: 'Untouched' }, 'ada');
  for (let i = 1; i <= 4; i++)
    await importVersion(registry, { slug: 'tamper', table: cauchyTable(1.4 + i / 100), provenance: { notes: `wafer ${i}` } }, 'ada');
  await importVersion(registry, { slug: 'intact', table: cauchyTable(1.6) }, 'ada');
  for (const ref of ['tamper@1', 'tamper@2', 'tamper@3', 'intact@1']) await approve(registry, ref, 'bob');
  lockfile = (await lockAdd(registry, (await lockAdd(registry, emptyLockfile(), 'tamper@1')).lock, 'intact@1')).lock;
  writeLockfile(lockPath, lockfile);
  server = await startServer({ registry, host: '127.0.0.1', port: 0 });
  const res = await fetch(`${server.url}${nkPath('tamper@1')}`);
  expect(res.status).toBe(200);
  nkBefore = await res.text();

  // The attack: another program opens the file, drops the triggers and edits rows.
  const raw = new Database(db);
  for (const t of IMMUTABILITY_TRIGGERS) raw.exec(`DROP TRIGGER ${t}`);
  const v1 = raw
    .prepare("SELECT v.id, v.content FROM material_versions v JOIN materials m ON m.id = v.material_id WHERE m.slug = 'tamper' AND v.number = 1")
    .get() as { id: number; content: string };
  const content = JSON.parse(v1.content);
  content.table.n[0] += 0.001; // a plausible, small edit of one value
  const id = (n: number) =>
    `(SELECT v.id FROM material_versions v JOIN materials m ON m.id = v.material_id WHERE m.slug = 'tamper' AND v.number = ${n})`;
  raw.prepare('UPDATE material_versions SET content = ? WHERE id = ?').run(canonicalJson(content), v1.id);
  raw.exec(`UPDATE material_versions SET notes = 'wafer 9' WHERE id = ${id(2)}`);
  raw.exec(`UPDATE material_versions SET sha256 = '${'0'.repeat(64)}' WHERE id = ${id(3)}`);
  raw.exec(`UPDATE material_versions SET content = '{"table": truncated' WHERE id = ${id(4)}`);
  raw.close();
});

afterAll(async () => {
  await server?.close();
  await registry?.close();
  rmSync(dir, { recursive: true, force: true });
});

describe('edits made directly in the database file', { timeout: 90_000 }, () => {
  it('are caught by verify, which names each tampered version and the dropped triggers', async () => {
    const report = await verifyRegistry(registry);
    expect(report.ok).toBe(false);
    expect(report.mismatches.map((m) => m.ref).sort()).toEqual(TAMPERED);
    expect(report.mismatches.find((m) => m.ref === 'tamper@4')?.reason).toMatch(/not valid JSON/);
    expect(report.missing_triggers).toEqual([...IMMUTABILITY_TRIGGERS]);
  });

  it('are refused by every service read path; untouched versions are still served', async () => {
    for (const ref of TAMPERED) {
      await expect(showVersion(registry, ref), ref).rejects.toThrow(IntegrityError);
      await expect(evaluateVersion(registry, ref, [500]), ref).rejects.toThrow(IntegrityError);
      await expect(exportVersion(registry, ref, 'csv'), ref).rejects.toThrow(IntegrityError);
      await expect(exportVersion(registry, ref, 'json'), ref).rejects.toThrow(IntegrityError);
      await expect(diffVersions(registry, 'intact@1', ref), ref).rejects.toThrow(IntegrityError);
    }
    await expect(showVersion(registry, 'tamper@1')).rejects.toThrow(/tamper@1: the stored content or provenance no longer matches its SHA-256/);
    expect((await showVersion(registry, 'intact@1')).status).toBe('approved');
    expect((await evaluateVersion(registry, 'intact@1', [500])).n).toHaveLength(1);
  });

  it('are refused over HTTP with a 500 problem document, never served as good', async () => {
    for (const ref of TAMPERED) {
      const res = await fetch(`${server.url}/api/v1/materials/${ref.replace('@', '/versions/')}`);
      expect(res.status, ref).toBe(500);
      expect(res.headers.get('content-type')).toBe('application/problem+json');
      expect(await res.json()).toMatchObject({ status: 500, rule: 'integrity-hash-mismatch' });
    }
    for (const ref of TAMPERED.slice(1)) {
      const res = await fetch(`${server.url}${nkPath(ref)}`);
      expect(res.status, ref).toBe(500);
      expect((await res.json()).rule).toBe('integrity-hash-mismatch');
    }
    // tamper@1's n,k answer was rendered and cached from the genuine content before the edit: the server may
    // keep serving that (it matches the stored hash), but never numbers computed from the edited content.
    const again = await fetch(`${server.url}${nkPath('tamper@1')}`);
    if (again.status === 200) expect(await again.text()).toBe(nkBefore);
    else expect((await again.json()).rule).toBe('integrity-hash-mismatch');
    expect((await fetch(`${server.url}${nkPath('intact@1')}`)).status).toBe(200);
  });

  it('are refused by the CLI as a corrupt registry (show, eval, export, diff: exit 4, nothing on stdout) and failed by verify (exit 3)', async () => {
    const [show, evaluated, exported, diffed, verified] = await Promise.all([
      cli(['show', 'tamper@1', '--json', '--db', db], 'ada'),
      cli(['eval', 'tamper@2', '--at', '500', '--json', '--db', db], 'ada'),
      cli(['export', 'tamper@3', '--format', 'csv', '--db', db], 'ada'),
      cli(['diff', 'intact@1', 'tamper@4', '--json', '--db', db], 'ada'),
      cli(['verify', '--db', db], 'ada'),
    ]);
    for (const r of [show, evaluated, exported, diffed]) {
      expect(r.code, r.err).toBe(4);
      expect(r.out).toBe('');
      expect(r.err).toMatch(/no longer matches its SHA-256.*\[integrity-hash-mismatch\]/);
      expect(r.err).not.toMatch(/\n\s+at /); // no stack trace
    }
    expect(verified.code).toBe(3);
    for (const ref of TAMPERED) expect(verified.err).toContain(`FAIL  ${ref}:`);
  });
});

describe('a lockfile pinned before the edits', { timeout: 90_000 }, () => {
  it('fails lock verify over HTTP: the pinned hash is recomputed from the edited content', async () => {
    const res = await fetch(`${server.url}/api/v1/locks/verify`, {
      method: 'POST',
      headers: { 'content-type': 'application/json' },
      body: JSON.stringify(lockfile),
    });
    expect(res.status).toBe(200);
    const report = await res.json();
    expect(report.ok).toBe(false);
    expect(report.entries.map((e: { ref: string; outcome: string }) => [e.ref, e.outcome])).toEqual([
      ['intact@1', 'ok'],
      ['tamper@1', 'mismatch'],
    ]);
    expect(report.history).toMatchObject({ outcome: 'ok', locked_head: lockfile.registry_head });
  });

  it('fails `nkledger lock verify` (exit 3), naming the edited version', async () => {
    const r = await cli(['lock', 'verify', '--lock', lockPath, '--db', db], 'ada');
    expect(r.code, r.err).toBe(3);
    expect(r.out).toMatch(/FAIL {2}tamper@1 content differs/);
    expect(r.out).toMatch(/ok {4}intact@1 ok/);
  });
});

describe('API tokens', () => {
  it('are stored only as SHA-256 hashes: no plaintext token in the database file or its WAL', async () => {
    const tokens = [];
    for (const role of ['reader', 'editor', 'admin']) tokens.push(await createToken(registry, { user: `t-${role}`, role, createdBy: 'ada' }));
    await revokeToken(registry, tokens[0].id, 'ada');
    const files = [db, `${db}-wal`].filter(existsSync);
    const scan = () => Buffer.concat(files.map((f) => readFileSync(f)));
    for (const pass of ['before checkpoint', 'after checkpoint']) {
      const bytes = scan();
      for (const t of tokens) {
        expect(bytes.includes(t.token), `${pass}: ${t.id}`).toBe(false);
        expect(bytes.includes(t.token.slice(4)), `${pass}: secret part of ${t.id}`).toBe(false);
        // The scan can see what is there: the hash of each token is found.
        expect(bytes.includes(sha256Hex(t.token)), `${pass}: hash of ${t.id}`).toBe(true);
      }
      registry.sqlite.pragma('wal_checkpoint(TRUNCATE)');
    }
  });
});
