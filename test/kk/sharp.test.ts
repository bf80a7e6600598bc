/**
 * Sharp features: exact Lorentz sums (an exact Kramers-Kronig pair, textbook) with peaks of Γ = 0.2 … 0.03 eV
 * sampled every 0.006 eV over 1–5 eV (≥ 5 samples per FWHM) are consistent; the Γ = 0.03 eV spectrum with
 * a 0.01 Gaussian bump in n (σ 0.15 eV), a 0.01 step in n, or k × 1.3 is not. Fixture:
 * test/fixtures/kk/sharp-lorentz.json from scripts/make-kk-sharp-cases.py (numpy 2.4.6, scipy 1.17.1).
 */
import { readFileSync } from 'node:fs';
import fc from 'fast-check';
import { describe, expect, it } from 'vitest';
import { flankingRuns, sharpPeakColumns } from '../../src/kk/basis.ts';
import { checkKramersKronig } from '../../src/kk/check.ts';
import type { NkTable } from '../../src/table.ts';

interface SharpDoc {
  generator: string;
  wavelength_nm: number[];
  cases: Record<string, { expect: 'consistent' | 'inconsistent'; gamma_ev: number; n: number[]; k: number[] }>;
}
const doc: SharpDoc = JSON.parse(readFileSync(new URL('../fixtures/kk/sharp-lorentz.json', import.meta.url), 'utf8'));

function table(name: string): NkTable {
  const c = doc.cases[name];
  // the fixture runs from 5 eV down (wavelength ascending already)
  return { wavelengthNm: doc.wavelength_nm, n: c.n, k: c.k };
}

describe('Kramers-Kronig check on sharp features (exact Lorentz sums)', () => {
  it('fixture names its generator and library versions', () => expect(doc.generator).toMatch(/scipy 1\.17\.1/));
  for (const [name, c] of Object.entries(doc.cases)) {
    it(`${name} (Γ = ${c.gamma_ev} eV): ${c.expect}`, () => {
      const report = checkKramersKronig(table(name));
      expect(report.verdict).toBe(c.expect);
      if (c.expect === 'consistent') expect(report.systematic_max_dn).toBeLessThan(0.0025); // half the default tolerance
    });
  }
  it('a step in n is reported as a swing of the misfit near the step', () => {
    const report = checkKramersKronig(table('step-n'));
    expect(report.systematic_swing_dn).toBeGreaterThan(0.005);
    expect(Math.abs(1239.841984 / report.systematic_swing_nm - 3.4)).toBeLessThan(0.15);
  });
});

describe('sharp-peak detection', () => {
  it('finds the runs around each point as walking down from it does, on rounded and noisy spectra', () => {
    fc.assert(
      fc.property(fc.array(fc.integer({ min: 0, max: 6 }), { minLength: 1, maxLength: 200 }), (y) => {
        const { start, end } = flankingRuns(y);
        y.forEach((_, i) => {
          let l = i;
          while (l > 0 && y[l - 1] <= y[l]) l--;
          let r = i;
          while (r < y.length - 1 && y[r + 1] <= y[r]) r++;
          expect([start[i], end[i]]).toEqual([l, r]);
        });
      }),
    );
  });

  it('a rounded million-point staircase with one sharp peak still gives that peak', () => {
    // ε2 rising in steps of 1e-7 (as a table written to 7 decimals) with one narrow peak: every step is a local
    // maximum; the answer is checked here, the time per point by `npx tsx scripts/bench-kk.ts rounded`.
    const count = 1_000_000;
    const e = Array.from({ length: count }, (_, i) => 1 + (4 * i) / (count - 1));
    const y = e.map((x) => Math.round((0.002 * x + 0.5 * Math.exp(-(((x - 3) / 0.01) ** 2))) * 1e7) / 1e7);
    const columns = sharpPeakColumns(e, y, 0.05, 0.01);
    expect(columns).toHaveLength(9);
    expect(columns[4].e0).toBeCloseTo(3, 3);
  });
});
