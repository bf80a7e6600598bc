/**
 * A million-row table (about 30 MB) through every compute path: import (with the size limit raised
 * to 64 MiB, as `--max-size 64` does), tabulated evaluation, a Cauchy fit and the Kramers-Kronig
 * check. Before no data-sized array was spread into Math.min/Math.max, tables of ≥ ~125,000 rows
 * overflowed the stack. The table is invented: Cauchy n = 1.45 + 0.004/λ²(µm), k = 0.
 * The CLI path runs once, on the same file, through `import --max-size 64 --fit cauchy --no-kk` and
 * `eval` (the KK check, the slowest step at about basis² × rows multiply-adds, runs once, above).
 * Slow by nature (about a minute on two shared cores): it is in test/reliability. The table is written to 7
 * decimals, as measured tables are: every rounding step of k is a small local maximum of ε2, which the KK check's
 * peak search once walked in O(n²) (minutes here); test/kk/sharp.test.ts checks the O(n) search against the walk.
 */
import { mkdtempSync, rmSync, writeFileSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { loadTable } from '../../src/service/source.ts';
import { evaluateTable } from '../../src/optics/table-eval.ts';
import { fitTable } from '../../src/fit/fit.ts';
import { checkKramersKronig } from '../../src/kk/check.ts';
import type { NkTable } from '../../src/table.ts';
import { cli } from './processes.ts';

const ROWS = 1_000_000;
const MAX_BYTES = 64 * 1024 * 1024;
let dir: string;
let path: string;

function millionRowCsv(): string {
  const lines = new Array<string>(ROWS + 1);
  lines[0] = 'wavelength_nm,n,k';
  for (let i = 0; i < ROWS; i++) {
    const wl = 300 + (700 * i) / (ROWS - 1);
    const um = wl / 1000;
    lines[i + 1] = `${wl.toFixed(5)},${(1.45 + 0.004 / (um * um)).toFixed(7)},${(0.002 * (300 / wl) ** 6).toFixed(7)}`;
  }
  return `${lines.join('\n')}\n`;
}

beforeAll(() => {
  dir = mkdtempSync(join(tmpdir(), 'nkledger-million-'));
  path = join(dir, 'million.csv');
  writeFileSync(path, millionRowCsv());
});
afterAll(() => rmSync(dir, { recursive: true, force: true }));

describe('a 1,000,000-row table', () => {
  let table: NkTable;

  it('imports with the size limit raised', async () => {
    const imported = await loadTable(path, { maxBytes: MAX_BYTES });
    table = imported.table;
    expect(table.wavelengthNm.length).toBe(ROWS);
  }, 60_000);

  it('is evaluated by interpolation', () => {
    const { n } = evaluateTable(table, [300, 550.123, 1000], 'monotone-cubic');
    expect(n[1]).toBeCloseTo(1.45 + 0.004 / 0.550123 ** 2, 6);
  });

  it('gets a Cauchy fit back to its generating coefficients', () => {
    const report = fitTable(table, { model: 'cauchy', target: 'n' });
    expect(report.parameters.A.value).toBeCloseTo(1.45, 6);
    expect(report.parameters.B.value).toBeCloseTo(0.004, 6);
  }, 60_000);

  it('gets a Kramers-Kronig check', () => {
    const report = checkKramersKronig(table);
    expect(['consistent', 'inconsistent', 'uninformative']).toContain(report.verdict);
    expect(report.points).toBe(ROWS);
  }, 600_000);

  it('goes through the CLI: import --max-size 64 --fit cauchy, then eval', async () => {
    const db = join(dir, 'million.db');
    const made = await cli(['material', 'add', 'big-glass', '--name', 'Big glass', '--db', db], 'lab-editor');
    expect(made.code, made.err).toBe(0);
    expect(made.err).toMatch(/created a new registry/); // material add creates a missing registry and says so
    const imported = await cli(
      ['import', path, '--material', 'big-glass', '--max-size', '64', '--fit', 'cauchy', '--no-kk', '--db', db],
      'lab-editor',
    );
    expect(imported.err).not.toMatch(/Maximum call stack|internal/i);
    expect(imported.code, imported.err).toBe(0);
    const evaluated = await cli(['eval', path, '--max-size', '64', '--at', '550'], 'lab-editor');
    expect(evaluated.code, evaluated.err).toBe(0);
    expect(evaluated.out).toMatch(/550/);
  }, 600_000);
});
