/**
 * The fitter reaches the optimum scipy.optimize.least_squares reaches from the same start on the same data
 * (reference library: scipy 1.17.1 with numpy 2.4.6, fixtures made by scripts/make-fit-reference.py):
 * parameters within 1e-6 relative on noise-free data, χ² within 0.1 % on noisy data, standard errors
 * within 1e-4 relative (measured: 4.1e-5 on the Sellmeier case, ≤ 1.2e-7 on the others; scipy's Jacobian is a
 * finite-difference one). The 8-point case has N = 16 residuals for p = 5 parameters, so using N instead of
 * N − p in s² = χ²/(N − p) would move its standard errors by 21 %.
 */
import { describe, expect, it } from 'vitest';
import { fitTable } from '../../src/fit/fit.ts';
import { buildModel } from '../../src/models/catalogue.ts';
import type { NkTable } from '../../src/table.ts';
import sellmeier from '../reference/fit-sellmeier.json' with { type: 'json' };
import taucLorentz from '../reference/fit-tauc-lorentz.json' with { type: 'json' };
import lorentzDrude from '../reference/fit-lorentz-drude.json' with { type: 'json' };
import taucLorentzFewPoints from '../reference/fit-tauc-lorentz-8-points.json' with { type: 'json' };

interface Fixture {
  source: string;
  model: string;
  terms: number;
  fixed: Record<string, number>;
  start: Record<string, number>;
  wavelength_nm: number[];
  sigma_n: number;
  sigma_k: number;
  noise_free: { n: number[]; k: number[]; optimum: { parameters: Record<string, number>; chi2: number } };
  noisy: { n: number[]; k: number[]; optimum: { parameters: Record<string, number>; stderr: Record<string, number>; chi2: number } };
}

function table(f: Fixture, data: { n: number[]; k: number[] }): NkTable {
  return {
    wavelengthNm: f.wavelength_nm,
    n: data.n,
    k: data.k,
    sigmaN: f.wavelength_nm.map(() => f.sigma_n),
    sigmaK: f.wavelength_nm.map(() => f.sigma_k),
  };
}

function fit(f: Fixture, data: { n: number[]; k: number[] }) {
  return fitTable(table(f, data), { model: f.model, terms: f.terms, init: f.start, fix: f.fixed });
}

const fixtures: [string, Fixture][] = [
  ['Sellmeier (3 terms, Malitson 1965 fused silica data)', sellmeier as Fixture],
  ['Tauc-Lorentz', taucLorentz as Fixture],
  ['Lorentz + Drude', lorentzDrude as Fixture],
  ['Tauc-Lorentz on 8 wavelengths (N − p = 11 of N = 16)', taucLorentzFewPoints as Fixture],
];

/** Standard errors agree with scipy's to this relative error (measured worst 4.1e-5: scipy differentiates numerically). */
const STDERR_RELATIVE = 1e-4;

describe('same optimum as scipy.optimize.least_squares (reference library)', () => {
  for (const [name, f] of fixtures) {
    it(`${name}: noise-free data, parameters within 1e-6 relative`, () => {
      const report = fit(f, f.noise_free);
      for (const [p, value] of Object.entries(f.noise_free.optimum.parameters)) {
        expect(Math.abs(report.parameters[p].value - value) / Math.abs(value), p).toBeLessThan(1e-6);
      }
    });

    it(`${name}: noisy data, χ² within 0.1 %`, () => {
      const report = fit(f, f.noisy);
      const free = report.correlations.parameters.length;
      const chi2 = (report.statistics.reduced_chi2 as number) * (report.statistics.points - free);
      expect(Math.abs(chi2 - f.noisy.optimum.chi2) / f.noisy.optimum.chi2).toBeLessThan(1e-3);
      expect(chi2).toBeLessThanOrEqual(f.noisy.optimum.chi2 * (1 + 1e-9));
    });

    it(`${name}: noisy data, standard errors s²(JᵀWJ)⁻¹ (Numerical Recipes ch. 15) agree with scipy's to ${STDERR_RELATIVE}`, () => {
      const report = fit(f, f.noisy);
      // a model with k ≡ 0 (Sellmeier) is fitted to n alone, as scipy's residuals of that case are
      expect(report.statistics.points).toBe((buildModel(f.model, { terms: f.terms }).absorbing ? 2 : 1) * f.wavelength_nm.length);
      for (const [p, stderr] of Object.entries(f.noisy.optimum.stderr)) {
        expect(Math.abs((report.parameters[p].stderr as number) - stderr) / stderr, p).toBeLessThan(STDERR_RELATIVE);
      }
    });
  }
});
