import { readFileSync } from 'node:fs';
import { describe, expect, it } from 'vitest';
import { fillBasisRows, makeKkBasis } from '../../src/kk/basis.ts';
import { kkEps1FromPiecewiseLinearEps2, poleEps1, triangleEps2 } from '../../src/kk/transform.ts';

const reference = JSON.parse(readFileSync(new URL('../reference/kk-piecewise-linear-scipy.json', import.meta.url), 'utf8'));

describe('analytic KK transform of a piecewise-linear ε2', () => {
  // reference library: scipy 1.17.1 quad(weight='cauchy'), fixture from scripts/gen-kk-cases.py
  for (const c of reference.cases) {
    it(`matches scipy principal-value quadrature for the "${c.name}" ε2`, () => {
      const got = kkEps1FromPiecewiseLinearEps2(c.nodes_eV, c.eps2, c.energy_eV);
      got.forEach((v, i) => expect(v).toBeCloseTo(c.eps1_minus_eps_inf[i], 8));
    });
  }

  it('reproduces ε1 of a Lorentz oscillator from its sampled ε2 (exact KK pair, textbook: Fujiwara 2007 ch. 5)', () => {
    // published form ε = A/(E0² − E² − iΓE); ε2 sampled to 400 eV, its tail beyond changes ε1 by < 1e-6
    const [amp, e0, gamma] = [20, 3, 0.6];
    const nodes: number[] = [];
    for (let e = 0; e <= 400; e += e < 20 ? 0.002 : 0.05) nodes.push(e);
    const eps2 = nodes.map((e) => (amp * gamma * e) / ((e0 * e0 - e * e) ** 2 + (gamma * e) ** 2));
    const energies = [0.5, 1.7, 2.9, 3.05, 4.4, 8];
    const eps1 = kkEps1FromPiecewiseLinearEps2(nodes, eps2, energies);
    energies.forEach((e, i) => {
      const exact = (amp * (e0 * e0 - e * e)) / ((e0 * e0 - e * e) ** 2 + (gamma * e) ** 2);
      expect(Math.abs(eps1[i] - exact)).toBeLessThan(2e-4);
    });
  });
});

describe('the check basis', () => {
  const basis = makeKkBasis(1.0, 4.0, 12);
  const row1 = new Float64Array(basis.columnCount);
  const row2 = new Float64Array(basis.columnCount);
  const scratch = new Float64Array(basis.knotsEv.length);

  it('lays knots beyond the window on both sides, down to 0 eV and up to ≥ 3·E_max', () => {
    expect(basis.knotsEv[0]).toBe(0);
    expect(basis.knotsEv[basis.knotsEv.length - 1]).toBeGreaterThanOrEqual(12);
    expect(basis.spacingEv).toBeCloseTo(0.25, 12);
    for (let i = 1; i < basis.knotsEv.length; i++) expect(basis.knotsEv[i]).toBeGreaterThan(basis.knotsEv[i - 1]);
  });

  it('gives each triangle column the general piecewise-linear transform of that triangle', () => {
    for (const energy of [0.3, 1.0, 2.37, 4.0, 9.1]) {
      fillBasisRows(basis, energy, row1, row2, scratch);
      for (const j of [0, 5, 14, basis.triangleCount - 1]) {
        const nodes = basis.knotsEv.slice(j, j + 3);
        const [expected] = kkEps1FromPiecewiseLinearEps2(nodes, [0, 1, 0], [energy]);
        expect(row1[j]).toBeCloseTo(expected, 10);
        expect(row2[j]).toBeCloseTo(triangleEps2(nodes[0], nodes[1], nodes[2], energy), 12);
      }
      basis.polesEv.forEach((pole, i) => expect(row1[basis.triangleCount + i]).toBeCloseTo(poleEps1(pole, energy), 12));
      expect(row1[basis.columnCount - 1]).toBe(1);
    }
  });
});
