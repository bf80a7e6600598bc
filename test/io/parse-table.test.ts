import { readFileSync } from 'node:fs';
import { describe, expect, it } from 'vitest';
import { FIELD_WORDING } from '../../src/errors.ts';
import { parseNkTable, type ImportOptions } from '../../src/io/parse-table.ts';
import { refusal } from './refusal.ts';

const FIXTURES = new URL('../fixtures/import/', import.meta.url);
const read = (path: string) => readFileSync(new URL(path, FIXTURES));
const BASE = { wavelengthNm: [400, 500, 600], n: [1.52, 1.51, 1.5], k: [0.001, 0.0005, 0] };

/** Every good fixture, what it exercises, and the table and detection it must give. */
const GOOD: { file: string; options?: ImportOptions; table?: object; detected?: object; warnings?: RegExp[] }[] = [
  { file: 'basic-nm.csv', table: BASE, detected: { delimiter: ',', xUnit: 'nm', header: true, hasK: true } },
  { file: 'semicolon-decimal-comma-um.csv', table: BASE, detected: { delimiter: ';', decimalComma: true, xUnit: 'um' } },
  { file: 'tab-angstrom.tsv', table: BASE, detected: { delimiter: '\t', xUnit: 'A' } },
  {
    file: 'whitespace-ev-eps.txt',
    // ε = 9, −3+4i, 3+4i → N = 3, 1+2i, 2+i at 1, 2, 3 eV = 1239.841984, 619.920992, 413.28066… nm.
    table: { wavelengthNm: [1239.841984 / 3, 1239.841984 / 2, 1239.841984], n: [2, 1, 3], k: [1, 2, 0] },
    detected: { delimiter: 'whitespace', xUnit: 'eV', quantity: 'eps', columns: ['energy (eV)', 'ε1', 'ε2'] },
  },
  {
    file: 'bom-crlf-wavenumber-descending.csv',
    table: { ...BASE, wavelengthNm: [400, 500, 625] },
    detected: { bom: true, lineEnding: 'CRLF', xUnit: 'cm-1' },
  },
  {
    file: 'sigma-columns.csv',
    table: { ...BASE, sigmaN: [0.002, 0.001, 0.001], sigmaK: [0.0003, 0.0002, 0.0002] },
    detected: { hasSigma: true, roles: ['x', 'n', 'k', 'sigma_n', 'sigma_k'] },
  },
  { file: 'comments-blank-lines.csv', table: BASE, detected: { dataLines: [5, 10], rows: 3 }, warnings: [] },
  { file: 'headerless.csv', options: { columns: ['wavelength', 'n', 'k'], xUnit: 'nm' }, table: BASE, detected: { header: false } },
  {
    file: 'headerless.csv',
    options: { columns: ['wavelength (Å)', 'n', 'k'], xUnit: 'nm' }, // the explicit unit wins over the one in --columns
    table: BASE,
  },
  { file: 'basic-nm.csv', options: { xUnit: 'A' }, table: { ...BASE, wavelengthNm: [40, 50, 60] } },
  {
    file: 'negative-k-within-tolerance.csv',
    table: { wavelengthNm: [400, 500, 600, 700], n: [1.52, 1.51, 1.5, 1.49], k: [0.001, 0, 0, 0] },
    warnings: [/^2 point\(s\) with small negative k \(down to -0\.00040, within the tolerance 0\.001\) set to 0$/],
  },
  { file: 'identical-repeat.csv', table: BASE, detected: { rows: 4 }, warnings: [/^1 identical repeated row\(s\) merged$/] },
  {
    file: 'unsorted.csv',
    table: { wavelengthNm: [400, 500, 600, 700], n: [1.52, 1.51, 1.5, 1.49], k: [0.001, 0.0005, 0, 0] },
    warnings: [/not in order \(line 4 goes back\)/],
  },
  { file: 'large-gap.csv', warnings: [/^1 large gap\(s\) in x \(over 5× the median spacing of 10 nm\); largest 440–700 nm \(lines 6 and 7\)/] },
  { file: 'windows-1252-um.csv', table: BASE, detected: { encoding: 'windows-1252', xUnit: 'um' } },
  {
    file: 'extra-column.csv',
    table: BASE,
    detected: { roles: ['x', 'n', 'k', 'ignore'] },
    warnings: [/column 4 "temperature \(C\)" is not a known quantity; ignored/],
  },
  { file: 'bare-wavelength.csv', table: BASE, warnings: [/no unit; values 400–600 read as nm/] },
  { file: 'n-only.csv', table: { ...BASE, k: [0, 0, 0] }, detected: { hasK: false }, warnings: [/^no k column: k was not measured/] },
  // Instrument exports as they come (INVENTED numbers, Marrowick Optics demo lab; each file says so).
  {
    file: 'export-preamble.csv',
    table: BASE,
    detected: {
      header: true,
      headerLine: 6,
      preamble: [
        'Marrowick Optics MO-SE 640 spectroscopic ellipsometer - n,k export',
        'Comment: INVENTED test data of the Marrowick Optics demo lab, not a measurement',
        'Sample: TA-0412',
        'Operator: R. Okafor',
        'Angles: 65 70 75',
      ],
      dataLines: [7, 9],
    },
    warnings: [],
  },
  {
    file: 'export-units-row-trade-names.csv',
    table: BASE,
    detected: { headerLine: 2, unitsRow: ['nm', '', ''], roles: ['x', 'n', 'k'], xUnit: 'nm', dataLines: [4, 6] },
    warnings: [],
  },
  {
    file: 'export-wvl-brackets-um.txt',
    table: BASE,
    detected: {
      delimiter: 'whitespace',
      headerLine: 3,
      unitsRow: ['[um]', '[-]', '[-]'],
      columns: ['Wvl', 'N', 'K'],
      xUnit: 'um',
      preamble: [expect.stringMatching(/INVENTED/), 'Sample: MW-2291'],
    },
    warnings: [],
  },
  {
    file: 'export-ev-re-im-eps.csv',
    // ε = 9, −3+4i, 3+4i → N = 3, 1+2i, 2+i at 1, 2, 3 eV (as whitespace-ev-eps.txt).
    table: { wavelengthNm: [1239.841984 / 3, 1239.841984 / 2, 1239.841984], n: [2, 1, 3], k: [1, 2, 0] },
    detected: { delimiter: ';', decimalComma: true, xUnit: 'eV', quantity: 'eps', roles: ['x', 'eps1', 'eps2'] },
  },
  {
    file: 'export-photon-energy-spaces.txt',
    table: { wavelengthNm: [1239.841984 / 3, 1239.841984 / 2.5, 1239.841984 / 2], n: [1.5, 1.51, 1.52], k: [0, 0.0005, 0.001] },
    detected: { delimiter: 'whitespace', columns: ['Photon energy (eV)', 'n', 'k'], unitsRow: ['(eV)', '(-)', '(-)'], xUnit: 'eV' },
    warnings: [],
  },
  {
    file: 'export-no-k-column.tsv',
    table: { ...BASE, k: [0, 0, 0] },
    detected: { hasK: false, roles: ['x', 'n'], headerLine: 4 },
    warnings: [/^no k column: k was not measured; it is stored as 0/],
  },
];

/** Every malformed fixture and the exact refusal: rule, 1-based line and column (undefined where there is none). */
const BAD: [file: string, rule: string, line?: number, column?: number][] = [
  ['non-numeric.csv', 'non-numeric', 3, 2],
  ['decimal-comma-in-csv.csv', 'non-numeric', 2, 2],
  ['nan.csv', 'non-finite', 3, 3],
  ['infinity.csv', 'non-finite', 3, 2],
  ['overflow.csv', 'overflow', 4, 2],
  ['n-zero.csv', 'n-not-positive', 3, 2],
  ['n-negative.csv', 'n-not-positive', 3, 2],
  ['eps-metal.txt', 'n-not-positive', 3, 2],
  ['k-negative.csv', 'negative-k', 3, 3],
  ['negative-sigma.csv', 'negative-sigma', 3, 3],
  ['duplicate-x.csv', 'duplicate-x', 5, 1],
  ['one-row.csv', 'too-few-rows', 2, undefined],
  ['no-x-column.csv', 'no-x-column', 1, undefined],
  ['unknown-unit.csv', 'unknown-unit', 1, 3],
  ['missing-unit.csv', 'missing-unit', 1, 1],
  ['mixed-columns.csv', 'mixed-columns', 1, undefined],
  ['empty.csv', 'empty-file', undefined, undefined],
  ['comments-only.csv', 'empty-file', undefined, undefined],
  ['header-only.csv', 'header-only', 2, undefined],
  ['binary.bin', 'binary-file', undefined, undefined],
  ['field-count.csv', 'field-count', 3, 3],
  ['headerless.csv', 'no-header', 1, undefined],
  ['energy-zero.csv', 'x-not-positive', 2, 1],
  ['unbalanced-quote.csv', 'unbalanced-quote', 3, undefined],
  // Instrument exports (INVENTED numbers): values that contradict their unit, contradicting units, unknown names.
  ['um-under-nm-header.csv', 'implausible-range', 4, 1],
  ['far-beyond-1mm.csv', 'implausible-range', 5, 1],
  ['unit-conflict.csv', 'unit-conflict', 3, 1],
  ['unknown-header-names.txt', 'no-x-column', 4, undefined],
];

describe('parseNkTable: good files', () => {
  for (const c of GOOD) {
    it(`${c.file}${c.options ? ` with ${JSON.stringify(c.options)}` : ''}`, () => {
      const result = parseNkTable(read(`good/${c.file}`), { file: c.file, ...c.options });
      const t = result.table;
      if (c.table) {
        const expected = c.table as Record<string, number[]>;
        expect(Object.keys(t).sort()).toEqual(Object.keys(expected).sort());
        for (const key of Object.keys(expected)) {
          const got = (t as unknown as Record<string, number[]>)[key];
          expect(got.length, key).toBe(expected[key].length);
          got.forEach((v, i) => expect(v, `${key}[${i}]`).toBeCloseTo(expected[key][i], 12));
        }
      }
      for (let i = 1; i < t.wavelengthNm.length; i++) expect(t.wavelengthNm[i]).toBeGreaterThan(t.wavelengthNm[i - 1]);
      if (c.detected) expect(result.detected).toMatchObject(c.detected);
      if (c.warnings) {
        expect(result.warnings).toHaveLength(c.warnings.length);
        c.warnings.forEach((re, i) => expect(result.warnings[i]).toMatch(re));
      }
    });
  }
});

describe('parseNkTable: malformed files are refused with file, line, column and rule', () => {
  for (const [file, rule, line, column] of BAD) {
    it(`${file} → ${rule} at ${line ?? '-'}:${column ?? '-'}`, () => {
      const err = refusal(() => parseNkTable(read(`bad/${file}`), { file }));
      expect(err.rule).toBe(rule);
      expect(err.location).toEqual({ file, ...(line !== undefined && { line }), ...(column !== undefined && { column }) });
      expect(err.describe()).toMatch(
        new RegExp(`^${file.replace('.', '\\.')}${line ? `:${line}` : ''}${column ? `:${column}` : ''}: .+ \\[${rule}\\]$`),
      );
    });
  }
});

describe('parseNkTable: instrument exports', () => {
  const nmFile = 'Wavelength (nm),n,k\n245,2.31,0.21\n500,2.05,0.01\n1700,1.98,0\n';

  it('µm values under a nm header are refused and named as µm, with the options that get past it', () => {
    const err = refusal(() => parseNkTable(read('bad/um-under-nm-header.csv'), { file: 'x.csv' }));
    expect(err.message).toBe(
      'x values 0.245–1.7 read as nm are 0.245 nm – 1.7 nm, outside the range an optical-constants table plausibly covers (10 nm – 1 mm); 0.245–1.7 looks like µm',
    );
    expect(err.remedies).toEqual([{ option: 'input_unit', value: 'um' }, { option: 'allow_any_range' }]);
    expect(err.describe()).toMatch(/looks like µm: use --input-unit um or --allow-any-range \[implausible-range\]$/);
    expect(err.describe(FIELD_WORDING)).toMatch(/use input_unit=um or allow_any_range=true/);
    expect(parseNkTable(read('bad/um-under-nm-header.csv'), { xUnit: 'um' }).table.wavelengthNm).toEqual([245, 500, 1700]);
  });

  it('a wrong input unit is refused: eV on nm numbers (0.73–5.1 nm), µm on nm numbers (up to 1.7 mm); both look like nm', () => {
    for (const xUnit of ['eV', 'um'] as const) {
      const err = refusal(() => parseNkTable(nmFile, { file: 'f.csv', xUnit }));
      expect([err.rule, err.location.line, err.location.column]).toEqual(['implausible-range', xUnit === 'eV' ? 2 : 4, 1]);
      expect(err.message).toMatch(/245–1700 looks like nm$/);
      expect(err.remedies[0]).toEqual({ option: 'input_unit', value: 'nm' });
    }
  });

  it('the plausible range is 10 nm – 1 mm inclusive; allowAnyRange accepts genuine EUV or THz data', () => {
    expect(parseNkTable('wavelength (nm),n\n10,0.9\n1000000,3\n').table.wavelengthNm).toEqual([10, 1e6]);
    expect(refusal(() => parseNkTable('wavelength (nm),n\n9.99,0.9\n20,0.95\n')).rule).toBe('implausible-range');
    // 13.5 nm EUV and 0.5 THz (16.7 cm⁻¹ = 600 µm) are inside; 5 nm is not, unless allowed.
    const euv = 'wavelength (nm),n,k\n5,0.99,0.001\n13.5,0.92,0.007\n';
    expect(refusal(() => parseNkTable(euv)).remedies).toEqual([{ option: 'input_unit', value: 'um' }, { option: 'allow_any_range' }]);
    expect(parseNkTable(euv, { allowAnyRange: true }).table.wavelengthNm).toEqual([5, 13.5]);
  });

  it('headerLine says where the header is; the lines above are the preamble', () => {
    const text = 'Run 7\nWavelength (nm),n,k\n400,1.52,0\n500,1.51,0\n';
    const r = parseNkTable(text, { headerLine: 2 });
    expect(r.detected.preamble).toEqual(['Run 7']);
    expect(r.detected.headerLine).toBe(2);
    const err = refusal(() => parseNkTable(text, { headerLine: 9, file: 'f.csv' }));
    expect([err.rule, err.option, err.value]).toEqual(['bad-header-line', 'header_line', '9']);
    expect(err.describe()).toMatch(/^f\.csv: line 9 is not a content line/);
    // Said explicitly, a header with a number in it ("Run 7 n k") is a header; detection would call it preamble.
    expect(parseNkTable('# c\nwavelength (nm) n k\n400 1.5 0\n500 1.4 0\n', { headerLine: 2 }).table.n).toEqual([1.5, 1.4]);
  });

  it('a lone numeric line in the preamble ("65 70 75") is not the table', () => {
    const r = parseNkTable('Angles (deg)\n65 70 75\nWavelength (nm) n k\n400 1.52 0.001\n500 1.51 0\n');
    expect(r.detected.preamble).toEqual(['Angles (deg)', '65 70 75']);
    expect(r.table.n).toEqual([1.52, 1.51]);
  });

  it('the trade names are accepted (N/K, Wvl, a column named by its unit, Re/Im(eps), refractive index, extinction coefficient)', () => {
    for (const header of ['Wvl (nm),N,K', 'nm,Refractive Index,Extinction Coefficient', 'Wavelength (nm),Re(eps),Im(eps)', 'Wvl,n,k\nnm,-,-']) {
      const r = parseNkTable(`${header}\n400,2.25,0\n500,2.25,0\n`);
      expect(r.detected.xUnit, header).toBe('nm');
      expect(r.detected.roles.slice(1), header).toEqual(header.includes('eps') ? ['eps1', 'eps2'] : ['n', 'k']);
    }
  });

  it('an unknown header lists the accepted names and says how to name the columns', () => {
    const err = refusal(() => parseNkTable(read('bad/unknown-header-names.txt'), { file: 'u.txt' }));
    expect(err.message).toMatch(/among "Pos_X", "Index_N", "Index_K"\. Accepted names \(any case\) are x: wavelength.*refractive index/);
    expect(err.describe()).toMatch(/use --columns "wavelength \(nm\),n,k" or --header-line N \[no-x-column\]$/);
  });
});

describe('parseNkTable: limits and options', () => {
  it('refuses input over the size limit and accepts it once the limit is raised', () => {
    const text = read('good/basic-nm.csv');
    const err = refusal(() => parseNkTable(text, { file: 'big.csv', maxBytes: 20 }));
    expect(err.rule).toBe('file-too-large');
    expect(err.remedies).toEqual([{ option: 'max_size', value: '1' }]);
    expect(err.describe()).toMatch(/: use --max-size 1 \[file-too-large\]$/);
    expect(parseNkTable(text, { maxBytes: text.byteLength }).table.n).toHaveLength(3);
  });

  it('k tolerance is the user’s: a looser one accepts k = −0.01, a tighter one refuses k = −0.0004', () => {
    expect(parseNkTable(read('bad/k-negative.csv'), { kTolerance: 0.02 }).table.k).toEqual([0.001, 0, 0]);
    const err = refusal(() => parseNkTable(read('good/negative-k-within-tolerance.csv'), { kTolerance: 1e-4 }));
    expect([err.rule, err.location.line, err.location.column]).toEqual(['negative-k', 3, 3]);
  });

  it('explicit delimiter and decimal comma override detection; a decimal comma with a comma separator is refused', () => {
    const text = 'wl_nm|n|k\n400|1,5|0\n500|1,4|0\n';
    expect(parseNkTable(text, { delimiter: '|' }).table.n).toEqual([1.5, 1.4]);
    expect(parseNkTable('wavelength (nm);n\n400;1.5\n500;1.4\n', { decimalComma: false }).table.n).toEqual([1.5, 1.4]);
    expect(refusal(() => parseNkTable('wavelength (nm),n\n400,1.5\n500,1.4\n', { decimalComma: true })).rule).toBe('bad-option');
  });

  it('ε input with σ(ε) columns gets σ(n), σ(k) by linear propagation through N = √ε', () => {
    // N = 2 + i (ε = 3 + 4i), σ(ε1) = σ(ε2) = 0.1: σn = σk = 0.1·|N|/(2|N|²) = 0.1/(2√5) (dN = dε/2N).
    const r = parseNkTable('energy (eV),eps1,eps2,sigma_eps1,sigma_eps2\n2,3,4,0.1,0.1\n3,3,4,0.1,0.1\n');
    expect(r.table.sigmaN?.[0]).toBeCloseTo(0.1 / (2 * Math.sqrt(5)), 14);
    expect(r.table.sigmaK?.[0]).toBeCloseTo(0.1 / (2 * Math.sqrt(5)), 14);
  });

  it('a string and its UTF-8 bytes import the same', () => {
    const bytes = read('good/semicolon-decimal-comma-um.csv');
    expect(parseNkTable(bytes.toString('utf8')).table).toEqual(parseNkTable(bytes).table);
  });
});
