/**
 * Analytic partial derivatives of every catalogue model against central finite differences
 * (common practice: a Jacobian is checked by differencing the function it differentiates).
 */
import { describe, expect, it } from 'vitest';
import { buildModel, type ModelQuantity } from '../../src/models/catalogue.ts';
import { spectralGrid } from '../../src/models/grid.ts';

const grid = spectralGrid(Array.from({ length: 60 }, (_, i) => 220 + i * 25));

const cases: { spec: string; options?: { terms?: number; urbach?: boolean }; p: Record<string, number> }[] = [
  { spec: 'cauchy', options: { urbach: true }, p: { A: 1.5, B: 0.005, C: 1e-4, k0: 0.01, Eu: 0.3, Eb: 5 } },
  { spec: 'sellmeier', options: { terms: 2 }, p: { A: 1.1, B1: 0.7, C1: 0.005, B2: 0.9, C2: 90 } },
  { spec: 'tauc-lorentz', p: { A: 122, E0: 3.45, C: 2.54, Eg: 1.2, eps_inf: 1.15 } },
  { spec: 'tauc-lorentz', options: { terms: 2 }, p: { A1: 80, E01: 3.4, C1: 2, A2: 40, E02: 5.5, C2: 3, Eg: 1.5, eps_inf: 1 } },
  { spec: 'lorentz', options: { terms: 2 }, p: { A1: 20, E01: 3, Gamma1: 0.4, A2: 50, E02: 7, Gamma2: 1, eps_inf: 1.2 } },
  {
    spec: 'tauc-lorentz+drude',
    p: {
      'tauc-lorentz.A': 60,
      'tauc-lorentz.E0': 5,
      'tauc-lorentz.C': 2,
      'tauc-lorentz.Eg': 3.6,
      'drude.Ep': 1.9,
      'drude.Gamma': 0.12,
      eps_inf: 3.6,
    },
  },
];

describe('analytic derivatives equal central differences', () => {
  for (const c of cases) {
    for (const quantity of ['nk', 'eps'] as ModelQuantity[]) {
      it(`${c.spec} ${JSON.stringify(c.options ?? {})} as ${quantity}`, () => {
        const model = buildModel(c.spec, c.options);
        const values = Float64Array.from(model.parameters.map((s) => c.p[s.name]));
        const analytic = model.evaluate(grid, values, quantity, true);
        model.parameters.forEach((spec, j) => {
          const h = 1e-6 * Math.max(Math.abs(values[j]), 1e-2);
          const plus = Float64Array.from(values);
          const minus = Float64Array.from(values);
          plus[j] += h;
          minus[j] -= h;
          const vp = model.evaluate(grid, plus, quantity, false);
          const vm = model.evaluate(grid, minus, quantity, false);
          for (let i = 0; i < grid.energyEv.length; i++) {
            const numRe = (vp.re[i] - vm.re[i]) / (2 * h);
            const numIm = (vp.im[i] - vm.im[i]) / (2 * h);
            const scale = 1e-5 * (1 + Math.abs(numRe) + Math.abs(numIm));
            expect(Math.abs(analytic.dRe![j][i] - numRe), `${spec.name} re @${i}`).toBeLessThan(scale);
            expect(Math.abs(analytic.dIm![j][i] - numIm), `${spec.name} im @${i}`).toBeLessThan(scale);
          }
        });
      });
    }
  }
});
