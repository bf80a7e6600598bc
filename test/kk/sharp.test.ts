/**
 * Sharp features: exact Lorentz sums (an exact Kramers-Kronig pair, textbook) with peaks of Γ = 0.2 … 0.03 eV
 * sampled every 0.006 eV over 1–5 eV (≥ 5 samples per FWHM) are consistent; the Γ = 0.03 eV spectrum with
 * a 0.01 Gaussian bump in n (σ 0.15 eV), a 0.01 step in n, or k × 1.3 is not. Fixture:
 * test/fixtures/kk/sharp-lorentz.json from scripts/make-kk-sharp-cases.py (numpy 2.4.6, scipy 1.17.1).
 */
import { readFileSync } from 'node:fs';
import fc from 'fast-check';
import { describe, expect, it } from 'vitest';
import { sharpPeakColumns } from '../../src/kk/basis.ts';
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

/**
 * sharpPeakColumns finds each local maximum's flanking minima from runs computed once; this is the direct
 * definition (walk down both sides from every maximum), which is O(n²) on rounded data. Both must agree.
 */
function peaksByWalking(e: number[], y: number[], spacingEv: number, minProminence: number): { e0: number; gamma: number }[] {
  const peaks: { e0: number; fwhm: number; prominence: number }[] = [];
  for (let i = 1; i < y.length - 1; i++) {
    if (!(y[i] > y[i - 1] && y[i] >= y[i + 1])) continue;
    let l = i;
    while (l > 0 && y[l - 1] <= y[l]) l--;
    let r = i;
    while (r < y.length - 1 && y[r + 1] <= y[r]) r++;
    const base = Math.max(y[l], y[r]);
    const prominence = y[i] - base;
    if (!(prominence > minProminence)) continue;
    const half = base + prominence / 2;
    let a = i;
    while (a > l && y[a - 1] > half) a--;
    let b = i;
    while (b < r && y[b + 1] > half) b++;
    if (a === l || b === r) continue;
    const left = e[a - 1] + ((half - y[a - 1]) / (y[a] - y[a - 1])) * (e[a] - e[a - 1]);
    const right = e[b] + ((y[b] - half) / (y[b] - y[b + 1])) * (e[b + 1] - e[b]);
    const fwhm = right - left;
    const sample = (e[r] - e[l]) / Math.max(1, r - l);
    if (fwhm < 4 * spacingEv && fwhm >= 3 * sample) peaks.push({ e0: e[i], fwhm, prominence });
  }
  peaks.sort((p, q) => q.prominence - p.prominence);
  return peaks
    .slice(0, 6)
    .flatMap(({ e0, fwhm }) => [-0.2, 0, 0.2].flatMap((o) => [0.7, 1, 1.4].map((f) => ({ e0: e0 + o * fwhm, gamma: f * fwhm }))));
}

describe('sharp-peak detection', () => {
  it('finds the same peaks as walking down from every maximum, on rounded and noisy spectra', () => {
    fc.assert(
      fc.property(
        fc.array(fc.integer({ min: 0, max: 40 }), { minLength: 3, maxLength: 300 }),
        fc.double({ min: 0.01, max: 0.5, noNaN: true }),
        fc.double({ min: 0, max: 8, noNaN: true }),
        (levels, spacingEv, minProminence) => {
          const e = levels.map((_, i) => 1 + 0.01 * i);
          const y = levels.map((v, i) => v + 10 * Math.exp(-(((i - 150) / 8) ** 2))); // integer steps plus a peak
          expect(sharpPeakColumns(e, y, spacingEv, minProminence)).toEqual(peaksByWalking(e, y, spacingEv, minProminence));
        },
      ),
    );
  });

  it('a rounded million-point staircase with one sharp peak still gives that peak', () => {
    // ε2 rising in steps of 1e-7 (as a table written to 7 decimals) with one narrow peak: before the runs were
    // computed once, this took minutes (every step is a local maximum); the answer is checked, not the time.
    const count = 1_000_000;
    const e = Array.from({ length: count }, (_, i) => 1 + (4 * i) / (count - 1));
    const y = e.map((x) => Math.round((0.002 * x + 0.5 * Math.exp(-(((x - 3) / 0.01) ** 2))) * 1e7) / 1e7);
    const columns = sharpPeakColumns(e, y, 0.05, 0.01);
    expect(columns).toHaveLength(9);
    expect(columns[4].e0).toBeCloseTo(3, 3);
  });
});
