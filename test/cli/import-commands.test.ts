import { mkdtempSync, readFileSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { describe, expect, it } from 'vitest';

import { runCli } from './run-cli.ts';

// End to end through the CLI's in-process entry (the `npx nkledger` process itself: test/cli/process.test.ts).
const nkledger = (args: string[], input?: string) => runCli(args, { input });

const noStackTrace = (stderr: string) => expect(stderr).not.toMatch(/\n\s+at |Error:|node:internal/);

describe('nkledger inspect / eval / convert end to end', () => {
  it('inspect --json reports points, range, unit, columns, k, n and k ranges and warnings', async () => {
    const r = await nkledger(['inspect', 'data/marrowick/al2o3-ald.csv', '--json']);
    expect(r.code).toBe(0);
    const report = JSON.parse(r.stdout);
    expect(report).toMatchObject({
      points: 291,
      range_nm: [250, 1700],
      x_unit: 'um',
      columns: ['Wellenlaenge (um)', 'n', 'k'],
      has_k: true,
      dialect: { delimiter: ';', decimal_comma: true },
    });
    expect(report.n_range[0]).toBeGreaterThan(1.6);
    expect(report.n_range[1]).toBeLessThan(1.75);
    expect(report.warnings).toHaveLength(1);
    expect(report.warnings[0]).toMatch(/small negative k/);
  });

  it('inspect prints a short text summary', async () => {
    const r = await nkledger(['inspect', 'data/marrowick/a-si-h.txt']);
    expect(r.code).toBe(0);
    expect(r.stdout).toMatch(/^data\/marrowick\/a-si-h\.txt: 201 points, 261\.019–1653\.12 nm$/m);
    expect(r.stdout).toMatch(/ε1, ε2 converted to n, k/);
  });

  it('eval --json interpolates at the requested wavelengths; stdin works with "-"', async () => {
    const csv = 'wavelength (nm),n,k\n400,1.50,0.010\n500,1.40,0.000\n';
    const r = await nkledger(['eval', '-', '--at', '400,450,500', '--json'], csv);
    expect(r.code).toBe(0);
    const out = JSON.parse(r.stdout);
    expect(out.wavelength_nm).toEqual([400, 450, 500]);
    out.n.forEach((v: number, i: number) => expect(v).toBeCloseTo([1.5, 1.45, 1.4][i], 12));
    out.k.forEach((v: number, i: number) => expect(v).toBeCloseTo([0.01, 0.005, 0][i], 12));
  });

  it('eval outside the range exits 2 and says a table is never extrapolated (fit a model)', async () => {
    const r = await nkledger(['eval', 'data/marrowick/sio2-thermal.csv', '--at', '200']);
    expect(r.code).toBe(2);
    expect(r.stderr).toMatch(
      /^nkledger: 200 nm is outside the measured range 220–1700 nm.*never extrapolated \(fit a dispersion model to evaluate beyond it\).*\[outside-range\]$/m,
    );
    noStackTrace(r.stderr);
  });

  it('a malformed file exits 2 with file:line:column, the rule, and no stack trace', async () => {
    const r = await nkledger(['inspect', 'test/fixtures/import/bad/non-numeric.csv']);
    expect(r.code).toBe(2);
    expect(r.stdout).toBe('');
    expect(r.stderr).toBe('nkledger: test/fixtures/import/bad/non-numeric.csv:3:2: "1.51x" is not a number [non-numeric]\n');
  });

  it('input flags override detection (headerless file with --columns and --input-unit)', async () => {
    const r = await nkledger(['inspect', 'test/fixtures/import/good/headerless.csv', '--columns', 'wavelength,n,k', '--input-unit', 'um', '--json']);
    expect(r.code).toBe(0);
    expect(JSON.parse(r.stdout).range_nm).toEqual([400000, 600000]);
    const bad = await nkledger(['inspect', 'test/fixtures/import/good/basic-nm.csv', '--input-unit', 'furlong']);
    expect(bad.code).toBe(2);
    expect(bad.stderr).toMatch(/--input-unit furlong: unknown unit .*\[bad-option\]/);
  });

  it('convert writes CSV in the chosen x unit that imports back, and JSON', async () => {
    const dir = mkdtempSync(join(tmpdir(), 'nkledger-convert-'));
    const out = join(dir, 'mgf2.csv');
    const r = await nkledger(['convert', 'data/marrowick/mgf2-evaporated.csv', '--to', 'csv', '--x-unit', 'eV', '-o', out]);
    expect(r.code).toBe(0);
    const text = readFileSync(out, 'utf8');
    expect(text.split('\r\n')[0]).toBe('energy_eV,n,k');
    const back = JSON.parse((await nkledger(['inspect', out, '--json'])).stdout);
    expect(back).toMatchObject({ points: 343, x_unit: 'eV' });
    const json = JSON.parse((await nkledger(['convert', 'data/marrowick/sinx-pecvd-recipe-a.csv', '--to', 'json'])).stdout);
    expect(Object.keys(json)).toEqual(['wavelength_nm', 'n', 'k', 'sigma_n', 'sigma_k']);
  });
});
