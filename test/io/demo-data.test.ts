import { readFileSync } from 'node:fs';
import { describe, expect, it } from 'vitest';
import { parseNkTable } from '../../src/io/parse-table.ts';
import { epsFromNk } from '../../src/optics/permittivity.ts';

// The demo tables are INVENTED (data/README.md). Their generating models and noise are in data/marrowick/truth.json;
// the noise-free values on each file's grid are in test/reference/marrowick-truth.json, both written by
// scripts/make-demo-data.py (numpy 2.4.6), which implements the published model forms (Jellison & Modine 1996
// Tauc-Lorentz closed form, cross-checked there against scipy 1.17.1 quad; textbook Drude, Cauchy, Sellmeier).
const DATA = new URL('../../data/marrowick/', import.meta.url);
const truth = JSON.parse(readFileSync(new URL('truth.json', DATA), 'utf8'));
const reference = JSON.parse(readFileSync(new URL('../reference/marrowick-truth.json', import.meta.url), 'utf8')).files as Record<
  string,
  { wavelength_nm: number[]; n: number[]; k: number[]; eps1: number[]; eps2: number[] }
>;
const files = Object.keys(reference);

const rms = (xs: number[]) => Math.sqrt(xs.reduce((s, x) => s + x * x, 0) / xs.length);

describe('Marrowick demo data', () => {
  it('has seven invented tables, each labelled invented in its first line', () => {
    expect(files).toHaveLength(7);
    for (const f of files) expect(readFileSync(new URL(f, DATA), 'utf8').split('\n')[0]).toMatch(/INVENTED/);
  });

  for (const file of files) {
    it(`${file} imports cleanly and matches its generating model (${truth[file].model}) within the noise`, () => {
      const spec = truth[file];
      const ref = reference[file];
      const { table, detected, warnings } = parseNkTable(readFileSync(new URL(file, DATA)), { file });
      expect(detected.xUnit).toBe(spec.x_unit);
      expect(table.wavelengthNm).toHaveLength(spec.points);
      for (const w of warnings) expect(w).toMatch(detected.hasK ? /small negative k/ : /small negative k|^no k column/); // clipped noise (and an absent k) are the only things to say
      // Reference grid is ascending in nm like the table (a-Si:H and MgF2 are stored descending in the file).
      const order = ref.wavelength_nm.map((_, i) => i).sort((a, b) => ref.wavelength_nm[a] - ref.wavelength_nm[b]);
      order.forEach((j, i) => expect(table.wavelengthNm[i]).toBeCloseTo(ref.wavelength_nm[j], 6));
      if (detected.quantity === 'eps') {
        // Noise was added to ε1 (σ 0.01): the residual RMS of ε1 rebuilt from the imported n,k is that noise.
        const e1 = table.n.map((n, i) => epsFromNk(n, table.k[i]).eps1);
        const r = rms(order.map((j, i) => e1[i] - ref.eps1[j]));
        expect(r).toBeGreaterThan(0.7 * spec.noise.eps1);
        expect(r).toBeLessThan(1.3 * spec.noise.eps1);
        return;
      }
      const dn = order.map((j, i) => table.n[i] - ref.n[j]);
      if (table.sigmaN) {
        // With σ columns: the normalized residuals have RMS ≈ 1 and none is beyond 5σ.
        const z = dn.map((d, i) => d / (table.sigmaN as number[])[i]);
        expect(rms(z)).toBeGreaterThan(0.8);
        expect(rms(z)).toBeLessThan(1.2);
        expect(Math.max(...z.map(Math.abs))).toBeLessThan(5);
      } else {
        const sigma = spec.noise.n as number;
        expect(rms(dn)).toBeGreaterThan(0.8 * sigma);
        expect(rms(dn)).toBeLessThan(1.2 * sigma);
        expect(Math.max(...dn.map(Math.abs))).toBeLessThan(5 * sigma + 5e-6); // + rounding to 5 decimals
      }
      // k: noise then clipping, so the measured k never exceeds the model by more than 5σ and is ≥ 0 after import.
      const sigmaK = table.sigmaK ? Math.max(...table.sigmaK) : parseFloat(String(spec.noise.k ?? 0));
      order.forEach((j, i) => {
        expect(table.k[i]).toBeGreaterThanOrEqual(0);
        expect(Math.abs(table.k[i] - ref.k[j])).toBeLessThan(5 * sigmaK + 5e-4 + 5e-6);
      });
    });
  }
});
