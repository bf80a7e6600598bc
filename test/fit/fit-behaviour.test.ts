import { describe, expect, it } from 'vitest';
import { InputError, NumericalError } from '../../src/errors.ts';
import { compareModels } from '../../src/fit/compare.ts';
import { fitTable } from '../../src/fit/fit.ts';
import { informationCriteria } from '../../src/fit/statistics.ts';
import { buildModel } from '../../src/models/catalogue.ts';
import type { NkTable } from '../../src/table.ts';

/** Synthetic Tauc-Lorentz film with deterministic pseudo-noise (invented test data). */
function tlTable(noise = 1e-3): NkTable {
  const wavelengthNm = Array.from({ length: 150 }, (_, i) => 250 + i * 9);
  const p = { A: 150, E0: 4, C: 2.5, Eg: 1.8, eps_inf: 1.3 };
  const { n, k } = buildModel('tauc-lorentz').nk(wavelengthNm, p);
  const wiggle = (i: number) => noise * Math.sin(i * 12.9898) * 1.7;
  return { wavelengthNm, n: n.map((v, i) => v + wiggle(i)), k: k.map((v, i) => Math.max(0, v + 0.5 * wiggle(i + 7))) };
}

describe('fitTable options and refusals', () => {
  const table = tlTable();

  it('refuses an unknown parameter listing the valid ones', () => {
    expect(() => fitTable(table, { model: 'tauc-lorentz', fix: { Egap: 2 } })).toThrow(/its parameters: A, E0, C, Eg, eps_inf/);
    expect(() => fitTable(table, { model: 'tauc-lorentz', fix: { Egap: 2 } })).toThrow(InputError);
  });

  it('holds --fix parameters and reports them with null stderr', () => {
    const r = fitTable(table, { model: 'tauc-lorentz', fix: { Eg: 1.8 } });
    expect(r.parameters.Eg).toEqual({ value: 1.8, stderr: null, unit: 'eV', at_bound: false });
    expect(r.options.fixed).toEqual(['Eg']);
    expect(r.correlations.parameters).not.toContain('Eg');
  });

  it('flags a parameter pinned at a user bound', () => {
    const r = fitTable(table, { model: 'tauc-lorentz', bounds: { Eg: [0.5, 1.5] } });
    expect(r.parameters.Eg.at_bound).toBe(true);
    expect(r.parameters.Eg.value).toBeCloseTo(1.5, 10);
    expect(r.parameters.Eg.stderr).toBeNull();
    expect(r.correlations.parameters).not.toContain('Eg');
    expect(r.warnings.join(' ')).toMatch(/Eg ended on its upper bound 1.5 eV/);
  });

  it('restricts to --range and reports it as range_nm', () => {
    const r = fitTable(table, { model: 'tauc-lorentz', rangeNm: [400, 1000] });
    expect(r.range_nm[0]).toBeGreaterThanOrEqual(400);
    expect(r.range_nm[1]).toBeLessThanOrEqual(1000);
    expect(r.statistics.points).toBe(2 * table.wavelengthNm.filter((x) => x >= 400 && x <= 1000).length);
  });

  it('refuses a window with too few rows and --init outside the bounds', () => {
    expect(() => fitTable(table, { model: 'tauc-lorentz', rangeNm: [251, 255] })).toThrow(/at least 3/);
    expect(() => fitTable(table, { model: 'tauc-lorentz', init: { Eg: 50 } })).toThrow(/outside its bounds/);
  });

  it('multi-start reports how many starts reached the best minimum', () => {
    const r = fitTable(table, { model: 'tauc-lorentz', starts: 6, seed: 3 });
    expect(r.multistart?.starts).toBe(6);
    expect(r.multistart!.reached_best).toBeGreaterThanOrEqual(1);
    expect(r.multistart!.reached_best).toBeLessThanOrEqual(6);
    const single = fitTable(table, { model: 'tauc-lorentz' });
    expect(r.statistics.aic).toBeLessThanOrEqual(single.statistics.aic + 1e-9);
  });

  it('turns a singular JᵀWJ into a NumericalError naming the parameters', () => {
    // Drude with Ep fixed at 0: the data cannot depend on Gamma
    expect(() => fitTable(table, { model: 'drude', fix: { Ep: 0 } })).toThrow(NumericalError);
    expect(() => fitTable(table, { model: 'drude', fix: { Ep: 0 } })).toThrow(/Gamma/);
  });

  it('turns a model that is not finite at the start into a NumericalError, not a stack trace', () => {
    // C ≥ 2·E0 makes the Tauc-Lorentz α = √(4E0² − C²) imaginary
    expect(() => fitTable(table, { model: 'tauc-lorentz', init: { E0: 1, C: 5 } })).toThrow(NumericalError);
  });

  it('reduced χ² is reported only with sigma columns, and is ≈ 1 when the sigmas are honest', () => {
    expect(fitTable(table, { model: 'tauc-lorentz' }).statistics.reduced_chi2).toBeNull();
    const sigma = 1.7e-3 / Math.SQRT2; // rms of 1.7e-3·sin(…)
    const weighted = { ...table, sigmaN: table.n.map(() => sigma), sigmaK: table.k.map(() => sigma / 2) };
    const r = fitTable(weighted, { model: 'tauc-lorentz' });
    expect(r.statistics.reduced_chi2).toBeGreaterThan(0.7);
    expect(r.statistics.reduced_chi2).toBeLessThan(1.3);
  });

  it('fits ε1, ε2 on request', () => {
    const r = fitTable(table, { model: 'tauc-lorentz', target: 'eps' });
    expect(r.options.target).toBe('eps');
    expect(r.parameters.Eg.value).toBeCloseTo(1.8, 1);
  });
});

describe('information criteria (Akaike 1974; Schwarz 1978, published formulas)', () => {
  it('AIC = N ln(χ²/N) + 2p and BIC = N ln(χ²/N) + p ln N', () => {
    const { aic, bic } = informationCriteria(2, 100, 4);
    expect(aic).toBeCloseTo(100 * Math.log(0.02) + 8, 12);
    expect(bic).toBeCloseTo(100 * Math.log(0.02) + 4 * Math.log(100), 12);
  });

  it('compareModels ranks the generating model best and carries the caveats', () => {
    const c = compareModels(tlTable(), ['cauchy', 'tauc-lorentz', 'lorentz']);
    expect(c.best_aic).toBe('tauc-lorentz');
    expect(c.models.find((m) => m.model === 'tauc-lorentz')!.delta_aic).toBe(0);
    expect(c.models.find((m) => m.model === 'cauchy')!.kk_consistent).toBe(false);
    expect(c.caveats.join(' ')).toMatch(/say nothing about whether a model is physical/);
    expect(() => compareModels(tlTable(), ['cauchy', 'nope'])).toThrow(/valid models/);
  });
});
