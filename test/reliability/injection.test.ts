/**
 * SQL-looking and path-looking text in every text field a user can fill — material name, description,
 * tags, every provenance field, notes, retire and withdraw reasons, user names (token users, --as), file
 * names, search terms, slugs in URLs — through the HTTP API and the CLI: each value is stored verbatim
 * or refused with a 4xx problem / exit 2, never executed (every table still there, row counts as expected,
 * verify ok, no file created at the path). Parameterized queries throughout (drizzle, better-sqlite3):
 * OWASP SQL Injection Prevention Cheat Sheet, defence option 1 (common practice).
 * Access control of every write route (missing, malformed, unknown, revoked and under-privileged tokens)
 * is tested in test/api/access.test.ts and not repeated here.
 */
import { existsSync, mkdtempSync, rmSync, writeFileSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { createMaterial, importVersion, showVersion, verifyRegistry, history } from '../../src/service/registry.ts';
import { csvTable, json, startHarness, type ApiHarness } from '../api/harness.ts';
import { cauchyTable } from '../registry/helpers.ts';
import { cli, tableCsv } from './processes.ts';

const SQL = ["'; DROP TABLE material_versions; --", "x' OR '1'='1", 'Robert"); DELETE FROM audit_log; --', '1; UPDATE materials SET slug = NULL'];
const PATHS = ['../../etc/passwd', '..\\..\\windows\\win.ini', '/etc/shadow', '%2e%2e%2f%2e%2e%2fetc%2fpasswd'];
const NASTY = [...SQL, ...PATHS];
const TABLES = ['materials', 'material_versions', 'audit_log', 'api_tokens'];

let h: ApiHarness;
let tableNames: string[];
beforeAll(async () => {
  h = await startHarness();
  // One row in every table, so a dropped or emptied table would show.
  await createMaterial(h.registry, { slug: 'seed', name: 'Seed' }, 'setup');
  await importVersion(h.registry, { slug: 'seed', table: cauchyTable(1.3) }, 'setup');
  tableNames = (h.registry.sqlite.prepare("SELECT name FROM sqlite_master WHERE type = 'table' ORDER BY name").all() as { name: string }[]).map(
    (t) => t.name,
  );
});
afterAll(() => h.stop());

/** The schema is intact, the triggers are all there and every hash verifies. */
async function expectNothingExecuted(): Promise<void> {
  const now = (h.registry.sqlite.prepare("SELECT name FROM sqlite_master WHERE type = 'table' ORDER BY name").all() as { name: string }[]).map(
    (t) => t.name,
  );
  expect(now).toEqual(tableNames);
  for (const t of TABLES) expect(h.count(t)).toBeGreaterThan(0);
  expect(await verifyRegistry(h.registry)).toMatchObject({ ok: true, missing_triggers: [] });
}

/** A refusal is a 4xx problem document. */
async function expectRefused(res: Response): Promise<void> {
  expect(res.status, await res.clone().text()).toBeGreaterThanOrEqual(400);
  expect(res.status).toBeLessThan(500);
  expect(res.headers.get('content-type')).toBe('application/problem+json');
}

describe('SQL-looking and path-looking input over HTTP', { timeout: 60_000 }, () => {
  it('material name, description and tags: stored verbatim or refused', async () => {
    let n = 0;
    for (const value of NASTY) {
      const slug = `inj-${++n}`;
      const res = await h.request('/api/v1/materials', { ...json({ slug, name: value, description: value, tags: [value] }), as: 'editor' });
      if (res.status === 201) {
        const m = await res.json();
        expect(m).toMatchObject({ name: value, description: value, tags: [value] });
      } else {
        await expectRefused(res); // tags allow letters, digits and . _ + - only
        const plain = await h.request('/api/v1/materials', { ...json({ slug, name: value, description: value }), as: 'editor' });
        expect(plain.status).toBe(201);
        expect(await plain.json()).toMatchObject({ name: value, description: value });
      }
      const back = await (await h.request(`/api/v1/materials/${slug}`)).json();
      expect(back.material).toMatchObject({ name: value, description: value });
      const found = await (await h.request(`/api/v1/materials?q=${encodeURIComponent(value)}`)).json();
      expect(found.materials.map((m: { slug: string }) => m.slug)).toContain(slug);
    }
    await expectNothingExecuted();
  });

  it('every provenance field and the upload file name: stored verbatim (file names as their last path component) or refused', async () => {
    await createMaterial(h.registry, { slug: 'inj-upload', name: 'Upload target' }, 'setup');
    const fields = ['sample', 'substrate', 'process', 'instrument', 'operator', 'notes', 'method', 'measured_on', 'angles_deg'];
    let a = 1.5;
    for (const value of NASTY) {
      const form = new FormData();
      form.set('table', new Blob([csvTable((a += 0.001))], { type: 'text/csv' }), `${value}.csv`);
      for (const f of fields.slice(0, 6)) form.set(f, value);
      form.set('kk', 'false');
      const res = await h.request('/api/v1/materials/inj-upload/versions', { method: 'POST', body: form, as: 'editor' });
      expect(res.status, await res.clone().text()).toBe(201);
      const { ref } = await res.json();
      const v = await showVersion(h.registry, ref);
      for (const f of fields.slice(0, 6)) expect(v.provenance[f as 'sample']).toBe(value);
      expect(v.provenance.source_file).toBe(`${value}.csv`.split(/[\\/]/).pop());
      // Structured fields refuse free text (a method name, an ISO date, a list of angles).
      for (const f of ['method', 'measured_on', 'angles_deg']) {
        const bad = new FormData();
        bad.set('table', new Blob([csvTable((a += 0.001))], { type: 'text/csv' }), 'x.csv');
        bad.set(f, value);
        await expectRefused(await h.request('/api/v1/materials/inj-upload/versions', { method: 'POST', body: bad, as: 'editor' }));
      }
    }
    await expectNothingExecuted();
  });

  it('retire and withdraw reasons and token user names: stored verbatim', async () => {
    await createMaterial(h.registry, { slug: 'inj-life', name: 'Lifecycle target' }, 'setup');
    let i = 0;
    for (const value of NASTY) {
      const made = await h.request('/api/v1/tokens', { ...json({ user: value, role: 'approver' }), as: 'admin' });
      expect(made.status, await made.clone().text()).toBe(201);
      const token = (await made.json()).token as string;
      const a = (await importVersion(h.registry, { slug: 'inj-life', table: cauchyTable(1.4 + ++i / 1000) }, 'setup')).version;
      const b = (await importVersion(h.registry, { slug: 'inj-life', table: cauchyTable(1.4 + ++i / 1000) }, 'setup')).version;
      const approved = await h.request(`/api/v1/materials/inj-life/versions/${a}/approve`, { method: 'POST', token });
      expect(approved.status).toBe(200);
      expect((await approved.json()).approved_by).toBe(value);
      const retired = await h.request(`/api/v1/materials/inj-life/versions/${a}/retire`, { ...json({ reason: value }), token });
      expect(await retired.json()).toMatchObject({ status: 'retired', retire_reason: value, retired_by: value });
      const withdrawn = await h.request(`/api/v1/materials/inj-life/versions/${b}/withdraw`, { ...json({ reason: value }), token });
      expect(await withdrawn.json()).toMatchObject({ status: 'withdrawn', withdraw_reason: value, withdrawn_by: value });
    }
    const actors = new Set((await history(h.registry, 'inj-life')).audit.map((e: { actor: string }) => e.actor));
    for (const value of NASTY) expect(actors.has(value)).toBe(true);
    await expectNothingExecuted();
  });

  it('path-looking and SQL-looking slugs and version numbers in URLs: refused with a 4xx problem', async () => {
    for (const value of NASTY) {
      const seg = encodeURIComponent(value);
      await expectRefused(await h.request(`/api/v1/materials/${seg}`));
      await expectRefused(await h.request(`/api/v1/materials/${seg}/versions/1`));
      await expectRefused(await h.request(`/api/v1/materials/inj-upload/versions/${seg}`));
      await expectRefused(
        await h.request(`/api/v1/materials/${seg}/versions`, {
          method: 'POST',
          headers: { 'content-type': 'text/csv' },
          body: csvTable(),
          as: 'editor',
        }),
      );
    }
    await expectNothingExecuted();
  });
});

describe('SQL-looking and path-looking input through the CLI', { timeout: 60_000 }, () => {
  const dir = mkdtempSync(join(tmpdir(), 'nkledger-inj-'));
  afterAll(() => rmSync(dir, { recursive: true, force: true }));

  it('--as, --note and --meta values are stored verbatim; nothing is written at a path-looking value', async () => {
    await createMaterial(h.registry, { slug: 'inj-cli', name: 'CLI target' }, 'setup');
    const file = join(dir, 'table.csv');
    writeFileSync(file, tableCsv(1.77));
    const who = SQL[0];
    const r = await cli(
      [
        'import',
        file,
        '--material',
        'inj-cli',
        '--no-kk',
        '--json',
        '--db',
        h.registry.path,
        '--as',
        who,
        '--note',
        SQL[2],
        '--meta',
        `sample=${PATHS[0]}`,
        `operator=${SQL[1]}`,
        `instrument=${join(dir, 'pwned')}`,
      ],
      'ignored',
    );
    expect(r.code, r.err).toBe(0);
    const v = await showVersion(h.registry, JSON.parse(r.out).ref);
    expect(v).toMatchObject({ created_by: who, provenance: { notes: SQL[2], sample: PATHS[0], operator: SQL[1], instrument: join(dir, 'pwned') } });
    expect(existsSync(join(dir, 'pwned'))).toBe(false);
    await expectNothingExecuted();
  });
});
