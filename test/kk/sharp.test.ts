/**
 * Sharp features: exact Lorentz sums (an exact Kramers-Kronig pair, textbook) with peaks of Γ = 0.2 … 0.03 eV
 * sampled every 0.006 eV over 1–5 eV (≥ 5 samples per FWHM) are consistent; the Γ = 0.03 eV spectrum with
 * a 0.01 Gaussian bump in n (σ 0.15 eV), a 0.01 step in n, or k × 1.3 is not. Fixture:
 * test/fixtures/kk/sharp-lorentz.json from scripts/make-kk-sharp-cases.py (numpy 2.4.6, scipy 1.17.1).
 */
import { readFileSync } from 'node:fs';
import { describe, expect, it } from 'vitest';
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
