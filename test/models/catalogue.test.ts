import { describe, expect, it } from 'vitest';
import { InputError } from '../../src/errors.ts';
import { buildModel, MODEL_CATALOGUE } from '../../src/models/catalogue.ts';

describe('model catalogue', () => {
  it('has one entry per model file, each fully described', () => {
    expect(MODEL_CATALOGUE.map((t) => t.name)).toEqual(['cauchy', 'sellmeier', 'tauc-lorentz', 'lorentz', 'drude']);
    for (const term of MODEL_CATALOGUE) {
      for (const p of term.parameters({ terms: 2, urbach: true })) {
        expect(p.unit.length).toBeGreaterThan(0);
        expect(p.meaning.length).toBeGreaterThan(0);
        expect(p.guessRule.length).toBeGreaterThan(0);
        expect(p.bounds[0]).toBeLessThan(p.bounds[1]);
      }
    }
  });

  it('uses the issue-3 parameter names (CLI/JSON contract)', () => {
    expect(buildModel('cauchy', { urbach: true }).parameters.map((p) => p.name)).toEqual(['A', 'B', 'C', 'k0', 'Eu', 'Eb']);
    expect(buildModel('sellmeier', { terms: 2 }).parameters.map((p) => p.name)).toEqual(['A', 'B1', 'C1', 'B2', 'C2']);
    expect(buildModel('tauc-lorentz').parameters.map((p) => p.name)).toEqual(['A', 'E0', 'C', 'Eg', 'eps_inf']);
    expect(buildModel('tauc-lorentz', { terms: 2 }).parameters.map((p) => p.name)).toEqual(['A1', 'E01', 'C1', 'A2', 'E02', 'C2', 'Eg', 'eps_inf']);
    expect(buildModel('drude').parameters.map((p) => p.name)).toEqual(['Ep', 'Gamma', 'eps_inf']);
    expect(buildModel('tauc-lorentz+drude').parameters.map((p) => p.name)).toEqual([
      'tauc-lorentz.A',
      'tauc-lorentz.E0',
      'tauc-lorentz.C',
      'tauc-lorentz.Eg',
      'drude.Ep',
      'drude.Gamma',
      'eps_inf',
    ]);
  });

  it('marks Cauchy not Kramers-Kronig consistent and says so in its notes', () => {
    const m = buildModel('cauchy');
    expect(m.kkConsistent).toBe(false);
    expect(m.notes.join(' ')).toMatch(/NOT Kramers-Kronig consistent/);
    expect(buildModel('tauc-lorentz+drude').kkConsistent).toBe(true);
  });

  it('refuses unknown models listing the valid ones, and non-summable sums', () => {
    expect(() => buildModel('forouhi')).toThrow(/valid models: cauchy, sellmeier, tauc-lorentz, lorentz, drude/);
    expect(() => buildModel('cauchy+drude')).toThrow(InputError);
    expect(() => buildModel('sellmeier', { terms: 5 })).toThrow(/1–4/);
    expect(() => buildModel('drude', { terms: 2 })).toThrow(/`terms` does not apply/);
  });

  it('Drude + Lorentz sum equals the sum of the parts minus one eps_inf (sums are in ε)', () => {
    const e = [0.5, 1, 2, 3];
    const sum = buildModel('lorentz+drude').eps(e, {
      'lorentz.A': 30,
      'lorentz.E0': 4,
      'lorentz.Gamma': 0.5,
      'drude.Ep': 2,
      'drude.Gamma': 0.1,
      eps_inf: 2,
    });
    const l = buildModel('lorentz').eps(e, { A: 30, E0: 4, Gamma: 0.5, eps_inf: 2 });
    const d = buildModel('drude').eps(e, { Ep: 2, Gamma: 0.1, eps_inf: 0 });
    e.forEach((_, i) => {
      expect(sum.eps1[i]).toBeCloseTo(l.eps1[i] + d.eps1[i], 12);
      expect(sum.eps2[i]).toBeCloseTo(l.eps2[i] + d.eps2[i], 12);
    });
  });

  it('Drude ε at E = Γ: ε1 = ε∞ − Ep²/(2Γ²), ε2 = Ep²/(2Γ²) (textbook form, Fujiwara 2007 ch. 5)', () => {
    const { eps1, eps2 } = buildModel('drude').eps([0.2], { Ep: 1, Gamma: 0.2, eps_inf: 3 });
    expect(eps1[0]).toBeCloseTo(3 - 1 / 0.08, 12);
    expect(eps2[0]).toBeCloseTo(1 / 0.08, 12);
  });

  it('refuses evaluation with a missing parameter, naming it', () => {
    expect(() => buildModel('drude').nk([500], { Ep: 1 })).toThrow(/needs parameter Gamma/);
  });
});
