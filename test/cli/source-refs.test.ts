/**
 * inspect, eval, fit and kk read SOURCE the same way: a file, or a registry version (slug@N, slug@sha256:PREFIX, a bare
 * slug). The CLI in-process (test/cli/run-cli.ts) on a temp registry; a real process where the working directory matters.
 */
import { spawnSync } from 'node:child_process';
import { existsSync, mkdtempSync, rmSync, writeFileSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { fitTable } from '../../src/fit/fit.ts';
import { approve, createMaterial, importVersion, openRegistry, retire } from '../../src/service/registry.ts';
import { cauchyTable } from '../registry/helpers.ts';
import { runCli } from './run-cli.ts';

const BIN = new URL('../../bin/nkledger.js', import.meta.url).pathname;
let dir: string;
let db: string;
let sha1: string;

async function run(args: string[]) {
  const r = await runCli(args, { env: { NKLEDGER_USER: 'ada', NKLEDGER_DB: db } });
  return { code: r.code, out: r.stdout, err: r.stderr };
}

/** A real process in `dir`, for what depends on the working directory. */
function runIn(cwd: string, args: string[]) {
  const r = spawnSync(process.execPath, [BIN, ...args], { cwd, encoding: 'utf8', env: { ...process.env, NKLEDGER_USER: 'ada', NKLEDGER_DB: db } });
  return { code: r.status, out: r.stdout, err: r.stderr };
}

beforeAll(async () => {
  dir = mkdtempSync(join(tmpdir(), 'nkledger-src-'));
  db = join(dir, 'lab.db');
  const registry = await openRegistry(db);
  try {
    // Invented Cauchy-like numbers (test/registry/helpers.ts), not a measurement.
    await createMaterial(registry, { slug: 'sio2-film', name: 'Oxide film' }, 'ada');
    sha1 = (await importVersion(registry, { slug: 'sio2-film', table: cauchyTable() }, 'ada')).sha256;
    await approve(registry, 'sio2-film@1', 'bob');
    await importVersion(registry, { slug: 'sio2-film', table: cauchyTable(1.46) }, 'ada');
    await approve(registry, 'sio2-film@2', 'bob');
    await retire(registry, 'sio2-film@2', 'substrate model was wrong', 'bob');
    await createMaterial(registry, { slug: 'model-only', name: 'Only a model' }, 'ada');
    const fit = fitTable(cauchyTable(), { model: 'cauchy' });
    await importVersion(registry, { slug: 'model-only', fit: fit as never }, 'ada');
  } finally {
    await registry.close();
  }
});
afterAll(() => rmSync(dir, { recursive: true, force: true }));

describe('registry versions as SOURCE of inspect, eval, fit and kk', { timeout: 120_000 }, () => {
  it('inspect slug@N: the stored table with its ref, hash and status', async () => {
    const r = await run(['inspect', 'sio2-film@1', '--json', '--db', db]);
    expect(r.code).toBe(0);
    expect(JSON.parse(r.out)).toMatchObject({
      source: 'registry',
      version: { ref: 'sio2-film@1', sha256: sha1, status: 'approved', model: null },
      points: 9,
      range_nm: [400, 800],
      x_unit: 'nm',
      columns: ['wavelength_nm', 'n', 'k'],
      dialect: null,
    });
    const text = await run(['inspect', 'sio2-film@1']);
    expect(text.out).toMatch(/^sio2-film@1: 9 points, 400–800 nm$/m);
    expect(text.out).toMatch(/version +approved, sha256:/);
  });

  it('a bare slug resolves to the latest approved version with a not-a-pin notice', async () => {
    const r = await run(['inspect', 'sio2-film', '--json']);
    expect(r.code).toBe(0);
    expect(JSON.parse(r.out).version.ref).toBe('sio2-film@1'); // @2 is retired
    expect(r.err).toMatch(/note: "sio2-film" means its latest approved version, now sio2-film@1; this is not a pin/);
  });

  it('fit slug@sha256:PREFIX fits the stored table and names the pin', async () => {
    const r = await run(['fit', `sio2-film@sha256:${sha1.slice(0, 10)}`, '--model', 'cauchy', '--json', '--db', db]);
    expect(r.code).toBe(0);
    const report = JSON.parse(r.out);
    expect(report.model).toBe('cauchy');
    // The table is n = 1.45 + 0.0036/λ² exactly (λ in µm): Cauchy recovers A and B (invented numbers, exact by construction).
    expect(report.parameters.A.value).toBeCloseTo(1.45, 6);
    expect(report.parameters.B.value).toBeCloseTo(0.0036, 6);
    expect((await run(['fit', `sio2-film@sha256:${sha1.slice(0, 10)}`, '--model', 'cauchy'])).out).toMatch(/^cauchy fit of sio2-film@1:/);
  });

  it('kk of a retired version runs and warns that it is retired', async () => {
    const r = await run(['kk', 'sio2-film@2', '--json']);
    expect(r.code).toBe(0);
    expect(JSON.parse(r.out).verdict).toBe('uninformative'); // k = 0 everywhere
    expect(r.err).toMatch(/warning: sio2-film@2 is retired .*substrate model was wrong/);
  });

  it('eval keeps working for tables and model-only versions', async () => {
    const table = await run(['eval', 'sio2-film@1', '--at', '500', '--json']);
    expect(JSON.parse(table.out)).toMatchObject({ ref: 'sio2-film@1', source: 'table', wavelength_nm: [500] });
    expect(JSON.parse(table.out).n[0]).toBeCloseTo(1.45 + 0.0036 / 0.25, 9);
    const model = await run(['eval', 'model-only@1', '--at', '500', '--json']);
    expect(model.code).toBe(0);
    expect(JSON.parse(model.out)).toMatchObject({ ref: 'model-only@1', source: 'model', model: 'cauchy' });
  });

  it('a model-only version is refused by inspect, fit and kk with a reason and exit 2', async () => {
    for (const args of [
      ['inspect', 'model-only@1'],
      ['fit', 'model-only@1', '--model', 'cauchy'],
      ['kk', 'model-only@1'],
    ]) {
      const r = await run(args);
      expect(r.code).toBe(2);
      expect(r.err).toMatch(
        /model-only@1 holds only a fitted cauchy model, no measured table.*nkledger eval model-only@1.*\[version-without-table\]/,
      );
      expect(r.err).not.toMatch(/\n\s+at /);
    }
  });

  it('input flags are ignored for a stored version, with a notice', async () => {
    const r = await run(['inspect', 'sio2-film@1', '--delimiter', ';']);
    expect(r.code).toBe(0);
    expect(r.err).toMatch(/note: the input flags \(delimiter\) read files; sio2-film@1 is a stored version/);
  });

  it('a file of the same name wins over a registry reference', async () => {
    writeFileSync(join(dir, 'sio2-film'), 'wavelength_nm,n,k\n500,1.5,0\n600,1.49,0\n700,1.48,0\n');
    const r = runIn(dir, ['inspect', 'sio2-film', '--json']);
    expect(r.code).toBe(0);
    expect(JSON.parse(r.out)).toMatchObject({ source: 'file', points: 3 });
    rmSync(join(dir, 'sio2-film'));
  });

  it('an unknown name says that neither a file nor a material of that name exists', async () => {
    const r = await run(['fit', 'sio2-flim', '--model', 'cauchy']);
    expect(r.code).toBe(2);
    expect(r.err).toMatch(/no file "sio2-flim" and no material "sio2-flim" in the registry .*\[source-not-found\]/);
  });

  it('without a registry database it refuses and creates none', async () => {
    const missing = join(dir, 'none.db');
    const r = await run(['kk', 'sio2-film@1', '--db', missing]);
    expect(r.code).toBe(2);
    expect(r.err).toMatch(/no registry database at .*none\.db.*\[source-not-found\]/);
    expect(existsSync(missing)).toBe(false);
  });
});
