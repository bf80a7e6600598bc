import { describe, expect, it } from 'vitest';
import { buildModel } from '../../src/models/catalogue.ts';
import reference from '../reference/tauc-lorentz-kk.json' with { type: 'json' };

describe('Tauc-Lorentz closed-form ε1 (Jellison & Modine, APL 69, 371 (1996))', () => {
  const model = buildModel('tauc-lorentz');
  for (const [index, c] of reference.cases.entries()) {
    it(`equals the principal-value KK integral of ε2 from scipy.integrate.quad (reference library, ${reference.source.match(/scipy [\d.]+/)?.[0]}), case ${index + 1}`, () => {
      const below = c.energy_ev.filter((e) => e < c.parameters.Eg).length;
      expect(below).toBeGreaterThanOrEqual(20);
      expect(c.energy_ev.length - below).toBeGreaterThanOrEqual(20);
      const { eps1, eps2 } = model.eps(c.energy_ev, c.parameters);
      eps1.forEach((v, i) => expect(Math.abs(v - c.eps1[i])).toBeLessThan(1e-8));
      eps2.forEach((v, i) => expect(Math.abs(v - c.eps2[i])).toBeLessThan(1e-12));
    });
  }

  it('gives ε1(2.0 eV) = 17.6351116 for the parameter set of docs/references.md (verified there against scipy)', () => {
    const { eps1 } = model.eps([2.0], { A: 122, E0: 3.45, C: 2.54, Eg: 1.2, eps_inf: 1.15 });
    expect(eps1[0]).toBeCloseTo(17.6351116, 7);
  });

  it('is finite and continuous at E = Eg (the two logarithms cancel)', () => {
    const p = { A: 122, E0: 3.45, C: 2.54, Eg: 1.2, eps_inf: 1.15 };
    const { eps1 } = model.eps([1.2 - 1e-6, 1.2, 1.2 + 1e-6], p);
    expect(eps1.every(Number.isFinite)).toBe(true);
    expect(Math.abs(eps1[0] - eps1[2])).toBeLessThan(1e-4);
    expect(Math.abs(eps1[1] - eps1[0])).toBeLessThan(1e-4);
  });
});
