/**
 * The fitter reaches the optimum scipy.optimize.least_squares reaches from the same start on the same data
 * (reference library: scipy 1.17.1, fixtures made by scripts/make-fit-reference.py, whose source line is
 * checked below): parameters within 1e-6 relative on noise-free data, χ² within 0.1 % on noisy data.
 */
import { describe, expect, it } from 'vitest';
import { fitTable } from '../../src/fit/fit.ts';
import type { NkTable } from '../../src/table.ts';
import sellmeier from '../reference/fit-sellmeier.json' with { type: 'json' };
import taucLorentz from '../reference/fit-tauc-lorentz.json' with { type: 'json' };
import lorentzDrude from '../reference/fit-lorentz-drude.json' with { type: 'json' };

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
];

describe('same optimum as scipy.optimize.least_squares (reference library)', () => {
  for (const [name, f] of fixtures) {
    it(`${name}: fixture names scipy 1.17.1`, () => {
      expect(f.source).toMatch(/scipy 1\.17\.1/);
    });

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

    it(`${name}: noisy data, standard errors s²(JᵀWJ)⁻¹ (Numerical Recipes ch. 15) agree with scipy's Jacobian to 1 %`, () => {
      const report = fit(f, f.noisy);
      for (const [p, stderr] of Object.entries(f.noisy.optimum.stderr)) {
        expect(Math.abs((report.parameters[p].stderr as number) - stderr) / stderr, p).toBeLessThan(0.01);
      }
    });
  }
});
