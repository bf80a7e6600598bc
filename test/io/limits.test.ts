/**
 * Both sides of every documented import limit: a value exactly on the limit is accepted (or not warned
 * about), the next value past it is refused (or warned about). The limits and their wording are documented
 * in src/io/import-types.ts and docs/cli.md "Reading tables": k ≥ −tolerance (default 1e-3), input size ≤ --max-size
 * (default 20 MiB), a gap warning for spacings over 5× the median spacing, x within 10 nm – 1 mm.
 */
import { mkdtempSync, rmSync, writeFileSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { afterAll, describe, expect, it } from 'vitest';
import { DEFAULT_K_TOLERANCE, LARGE_GAP_FACTOR, parseNkTable } from '../../src/io/parse-table.ts';
import { loadTable } from '../../src/service/source.ts';
import { refusal } from './refusal.ts';

const csv = (rows: string[]) => `wavelength (nm),n,k\n${rows.join('\n')}\n`;

describe('k tolerance: k ≥ −tolerance is clipped to 0 with a warning, k < −tolerance is refused', () => {
  it(`default tolerance ${DEFAULT_K_TOLERANCE}: k = −0.001 exactly is accepted and set to 0`, () => {
    expect(DEFAULT_K_TOLERANCE).toBe(0.001);
    const result = parseNkTable(csv(['400,1.52,0.002', '500,1.51,-0.001', '600,1.50,0']), { file: 'edge.csv' });
    expect(result.table.k).toEqual([0.002, 0, 0]);
    expect(result.warnings).toEqual(['1 point(s) with small negative k (down to -0.0010, within the tolerance 0.001) set to 0']);
  });

  it('default tolerance: k = −0.0010001 is refused at its line and column', () => {
    const err = refusal(() => parseNkTable(csv(['400,1.52,0.002', '500,1.51,-0.0010001', '600,1.50,0']), { file: 'edge.csv' }));
    expect([err.rule, err.location]).toEqual(['negative-k', { file: 'edge.csv', line: 3, column: 3 }]);
  });

  it('a user tolerance 1e-4: −0.0001 accepted, −0.00010001 refused', () => {
    expect(parseNkTable(csv(['400,1.52,0', '500,1.51,-0.0001']), { kTolerance: 1e-4 }).table.k).toEqual([0, 0]);
    expect(refusal(() => parseNkTable(csv(['400,1.52,0', '500,1.51,-0.00010001']), { kTolerance: 1e-4 })).rule).toBe('negative-k');
  });

  it('ε input: k from ε just inside −tolerance is accepted, just beyond it refused', () => {
    // n = 1.5, k = −0.001: ε1 = n² − k² = 2.249999, ε2 = 2nk = −0.003 (ε = N², textbook)
    const eps = (e2: string) => `wavelength (nm),eps1,eps2\n400,2.25,0\n500,2.249999,${e2}\n`;
    const accepted = parseNkTable(eps('-0.0029'));
    expect(accepted.table.k).toEqual([0, 0]);
    expect(refusal(() => parseNkTable(eps('-0.0031'))).rule).toBe('negative-k');
  });
});

describe('size limit: input of exactly --max-size bytes is read, one byte more is refused', () => {
  const text = csv(['400,1.52,0.001', '500,1.51,0.0005', '600,1.50,0']);
  const size = Buffer.byteLength(text);
  const dir = mkdtempSync(join(tmpdir(), 'nkledger-limits-'));
  afterAll(() => rmSync(dir, { recursive: true, force: true }));

  it('in memory (API uploads, stdin already read)', () => {
    expect(parseNkTable(text, { maxBytes: size }).table.n).toHaveLength(3);
    const err = refusal(() => parseNkTable(text, { file: 'big.csv', maxBytes: size - 1 }));
    expect(err.rule).toBe('file-too-large');
  });

  it('from a file (checked on its size before it is read)', async () => {
    const path = join(dir, 'edge.csv');
    writeFileSync(path, text);
    expect((await loadTable(path, { maxBytes: size })).table.n).toHaveLength(3);
    await expect(loadTable(path, { maxBytes: size - 1 })).rejects.toMatchObject({ rule: 'file-too-large' });
  });
});

describe(`gap warning: a spacing of exactly ${LARGE_GAP_FACTOR}× the median is not warned about, a larger one is`, () => {
  const gapWarning = (rows: string[]) => parseNkTable(csv(rows)).warnings.filter((w) => /large gap/.test(w));

  it('median spacing 10 nm, a 50 nm step: no warning', () => {
    expect(LARGE_GAP_FACTOR).toBe(5);
    expect(gapWarning(['400,1.5,0', '410,1.5,0', '420,1.5,0', '430,1.5,0', '440,1.5,0', '490,1.5,0', '500,1.5,0', '510,1.5,0'])).toEqual([]);
  });

  it('median spacing 10 nm, a 51 nm step: one warning naming it', () => {
    const warnings = gapWarning(['400,1.5,0', '410,1.5,0', '420,1.5,0', '430,1.5,0', '440,1.5,0', '491,1.5,0', '500,1.5,0', '510,1.5,0']);
    expect(warnings).toHaveLength(1);
    expect(warnings[0]).toMatch(/^1 large gap\(s\) in x \(over 5× the median spacing of 10 nm\); largest 440–491 nm \(lines 6 and 7\)/);
  });
});

describe('plausible range: x from 10 nm to 1 mm after unit conversion is accepted, beyond it refused', () => {
  it('exactly 10 nm and exactly 1 mm (1,000,000 nm) are accepted', () => {
    expect(parseNkTable(csv(['10,0.9,0.5', '20,0.95,0.4'])).table.wavelengthNm).toEqual([10, 20]);
    expect(parseNkTable(csv(['500000,3.4,0', '1000000,3.4,0'])).table.wavelengthNm).toEqual([500000, 1000000]);
  });

  it('9.99 nm and 1,000,100 nm are refused (implausible-range) at their line', () => {
    const low = refusal(() => parseNkTable(csv(['9.99,0.9,0.5', '20,0.95,0.4']), { file: 'edge.csv' }));
    expect([low.rule, low.location.line]).toEqual(['implausible-range', 2]);
    const high = refusal(() => parseNkTable(csv(['500000,3.4,0', '1000100,3.4,0']), { file: 'edge.csv' }));
    expect([high.rule, high.location.line]).toEqual(['implausible-range', 3]);
  });

  it('in another unit: 10,000 cm⁻¹ … 10 cm⁻¹ (1 µm … 1 mm) accepted, 9.99 cm⁻¹ (just over 1 mm) refused', () => {
    const wn = (rows: string[]) => `wavenumber (cm-1),n,k\n${rows.join('\n')}\n`;
    expect(parseNkTable(wn(['10,3.4,0', '10000,3.4,0'])).table.wavelengthNm).toEqual([1000, 1000000]);
    expect(refusal(() => parseNkTable(wn(['9.99,3.4,0', '10000,3.4,0']))).rule).toBe('implausible-range');
  });

  it('--allow-any-range accepts both sides', () => {
    expect(parseNkTable(csv(['9.99,0.9,0.5', '20,0.95,0.4']), { allowAnyRange: true }).table.wavelengthNm).toEqual([9.99, 20]);
  });
});
