/**
 * `nkledger import --fit` takes the fit flags of `nkledger fit` (one definition, one parser): the stored fit equals the
 * fit command's report for the same flags. The CLI in-process (test/cli/run-cli.ts) on a temp registry.
 */
import { mkdtempSync, rmSync, writeFileSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { parseFitOptions } from '../../src/service/fit-options.ts';
import { runCli } from './run-cli.ts';

let dir: string;
let table: string;

async function run(...args: string[]) {
  const r = await runCli(args, { env: { NKLEDGER_USER: 'ada', NKLEDGER_DB: join(dir, 'lab.db') } });
  return { code: r.code, out: r.stdout, err: r.stderr };
}

beforeAll(async () => {
  dir = mkdtempSync(join(tmpdir(), 'nkledger-fitflags-'));
  // Invented Cauchy numbers n = 1.45 + 0.0036/λ² + 0.0002/λ⁴ (λ in µm), k = 0, 400–800 nm: not a measurement.
  const rows = Array.from({ length: 41 }, (_, i) => 400 + 10 * i).map(
    (w) => `${w},${(1.45 + 0.0036 / (w / 1000) ** 2 + 0.0002 / (w / 1000) ** 4).toFixed(7)},0`,
  );
  table = join(dir, 'film.csv');
  writeFileSync(table, `wavelength_nm,n,k\n${rows.join('\n')}\n`);
  expect((await run('material', 'add', 'sio2-film', '--name', 'Oxide film')).code).toBe(0);
});
afterAll(() => rmSync(dir, { recursive: true, force: true }));

describe('fit flags of import --fit', { timeout: 120_000 }, () => {
  it('--range, --fix, --init and --target reach the stored fit exactly as `nkledger fit` applies them', async () => {
    const flags = ['--range', '450:750', '--fix', 'C=0.0002', '--init', 'A=1.4', '--target', 'n'];
    const fitted = await run('fit', table, '--model', 'cauchy', ...flags, '--json');
    expect(fitted.code).toBe(0);
    const direct = JSON.parse(fitted.out);
    const imported = await run('import', table, '--material', 'sio2-film', '--no-kk', '--fit', 'cauchy', ...flags, '--json');
    expect(imported.code, imported.err).toBe(0);
    const stored = JSON.parse((await run('show', JSON.parse(imported.out).ref, '--json')).out).content.fit;
    expect(stored.range_nm).toEqual([450, 750]);
    expect(stored.options).toMatchObject({ target: 'n', fixed: ['C'] });
    expect(stored.parameters.C).toMatchObject({ value: 0.0002, stderr: null });
    expect(stored.parameters).toEqual(direct.parameters);
    // Exact Cauchy data: A and B come back (invented numbers, exact by construction).
    expect(stored.parameters.A.value).toBeCloseTo(1.45, 7);
    expect(stored.parameters.B.value).toBeCloseTo(0.0036, 7);
  });

  it('refuses fit flags without --fit, and bad values with the flag named', async () => {
    const orphan = await run('import', table, '--material', 'sio2-film', '--no-kk', '--fix', 'A=1', '--range', '400:500');
    expect(orphan.code).toBe(2);
    expect(orphan.err).toMatch(/--range, --fix configure a fit: add --fit MODEL \[bad-option\]/);
    const bad = await run('import', table, '--material', 'sio2-film', '--no-kk', '--fit', 'cauchy', '--range', '700:400');
    expect(bad.code).toBe(2);
    expect(bad.err).toMatch(/--range 700:400: MIN must be below MAX \[bad-option\]/);
    expect(JSON.parse((await run('history', 'sio2-film', '--json')).out).versions).toHaveLength(1); // nothing stored
  });

  it('parseFitOptions names options as the front door spells them', async () => {
    expect(parseFitOptions({ range: '250:1700', fix: ['A=1'], bounds: ['C=0.1:5'], free: ['Eb'], starts: '3', urbach: true })).toEqual({
      rangeNm: [250, 1700],
      fix: { A: 1 },
      bounds: { C: [0.1, 5] },
      free: ['Eb'],
      starts: 3,
      urbach: true,
    });
    expect(() => parseFitOptions({ range: '5' }, (n) => (n === 'range' ? 'range_nm' : n))).toThrow('range_nm 5: expected MIN:MAX');
    expect(() => parseFitOptions({ starts: '0' })).toThrow('`starts` 0: expected a whole number 1–1000');
    expect(() => parseFitOptions({ target: 'r' })).toThrow('`target` r: expected one of nk, n, k, eps');
  });
});
