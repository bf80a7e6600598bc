import fc from 'fast-check';
import { describe, expect, it } from 'vitest';
import { parseNkTable } from '../../src/io/parse-table.ts';
import { SPECTRAL_UNITS, toWavelengthNm, type SpectralUnit } from '../../src/optics/units.ts';

// Property: a table written in any accepted dialect imports to the same numbers (fast-check; common practice).
const HEADER_X: Record<SpectralUnit, string> = {
  nm: 'Wavelength (nm)',
  um: 'lambda [µm]',
  A: 'wavelength (Å)',
  eV: 'Photon energy (eV)',
  'cm-1': 'wavenumber [cm-1]',
};

const dialect = fc.record({
  separator: fc.constantFrom(',', ';', '\t', 'whitespace'),
  decimalComma: fc.boolean(),
  crlf: fc.boolean(),
  bom: fc.boolean(),
  comments: fc.boolean(),
  descending: fc.boolean(),
  unit: fc.constantFrom(...SPECTRAL_UNITS),
});

const rows = fc.uniqueArray(fc.integer({ min: 1, max: 100000 }), { minLength: 2, maxLength: 40 }).chain((xs) =>
  fc.tuple(
    fc.constant(xs.map((x) => x / 1000)), // x with three decimals
    fc.array(fc.integer({ min: 1, max: 500000 }), { minLength: xs.length, maxLength: xs.length }),
    fc.array(fc.integer({ min: 0, max: 500000 }), { minLength: xs.length, maxLength: xs.length }),
  ),
);

describe('import of random tables in random dialects', () => {
  it('gives back the written numbers', () => {
    fc.assert(
      fc.property(dialect, rows, (d, [xs, nInt, kInt]) => {
        const useComma = d.decimalComma && d.separator !== ',';
        const sep = d.separator === 'whitespace' ? '   ' : d.separator;
        const num = (v: number) => (useComma ? String(v).replace('.', ',') : String(v));
        const order = xs.map((_, i) => i).sort((a, b) => (d.descending ? xs[b] - xs[a] : xs[a] - xs[b]));
        // Names with spaces ("Photon energy (eV)") in a whitespace-separated header are read too.
        const header = HEADER_X[d.unit];
        const lines = [...(d.comments ? ['# exported by a test'] : []), [header, 'n', 'k'].join(sep)];
        order.forEach((i, j) => {
          if (d.comments && j === 1) lines.push('', '# a comment between rows');
          lines.push([num(xs[i]), num(nInt[i] / 1e5), num(kInt[i] / 1e5)].join(sep));
        });
        const text = (d.bom ? '\ufeff' : '') + lines.join(d.crlf ? '\r\n' : '\n') + '\n';
        // x is random over 0.001–100 in any unit: the dialect is under test here, not the plausible range.
        const { table, detected } = parseNkTable(text, { allowAnyRange: true });
        expect(detected.xUnit).toBe(d.unit);
        expect(detected.decimalComma).toBe(
          useComma && [...xs, ...nInt.map((v) => v / 1e5), ...kInt.map((v) => v / 1e5)].some((v) => !Number.isInteger(v)),
        );
        const expected = xs.map((x, i) => ({ w: toWavelengthNm(x, d.unit), n: nInt[i] / 1e5, k: kInt[i] / 1e5 })).sort((a, b) => a.w - b.w);
        expect(table.wavelengthNm).toEqual(expected.map((e) => e.w));
        expect(table.n).toEqual(expected.map((e) => e.n));
        expect(table.k).toEqual(expected.map((e) => e.k));
      }),
      { numRuns: 300 },
    );
  });
});
