import { describe, expect, it } from 'vitest';
import { InputError } from '../../src/errors.ts';
import { evaluateTable } from '../../src/optics/table-eval.ts';
import type { NkTable } from '../../src/table.ts';

/** Analytic test curve: a Cauchy-like n(λ) = 1.45 + 0.0036/λ² + 0.0002/λ⁴ (λ in µm) and k(λ) = 0.05·exp(−λ/0.2). */
const nAnalytic = (nm: number) => 1.45 + 0.0036 / (nm / 1000) ** 2 + 0.0002 / (nm / 1000) ** 4;
const kAnalytic = (nm: number) => 0.05 * Math.exp(-nm / 200);

function sampled(stepNm: number, fromNm = 300, toNm = 1500): NkTable {
  const wavelengthNm: number[] = [];
  for (let w = fromNm; w <= toNm + 1e-9; w += stepNm) wavelengthNm.push(w);
  return { wavelengthNm, n: wavelengthNm.map(nAnalytic), k: wavelengthNm.map(kAnalytic) };
}

function maxError(table: NkTable, method: 'linear' | 'monotone-cubic', f: (nm: number) => number, key: 'n' | 'k'): number {
  const query: number[] = [];
  for (let w = 300; w <= 1500; w += 0.7) query.push(w);
  const values = evaluateTable(table, query, method)[key];
  return Math.max(...query.map((w, i) => Math.abs(values[i] - f(w))));
}

/** Max |f''| of n on [300, 1500] nm, at 300 nm where the curve bends most (analytic second derivative). */
function maxSecondDerivativeN(): number {
  const l = 0.3; // µm
  const d2PerUm2 = (6 * 0.0036) / l ** 4 + (20 * 0.0002) / l ** 6;
  return d2PerUm2 / 1e6; // per nm²
}

describe('tabulated evaluation', () => {
  it('linear interpolation error stays within the textbook bound h²·max|f″|/8 (standard interpolation error bound)', () => {
    const h = 20;
    const err = maxError(sampled(h), 'linear', nAnalytic, 'n');
    expect(err).toBeLessThanOrEqual((h * h * maxSecondDerivativeN()) / 8);
    expect(err).toBeGreaterThan(0);
  });

  it('monotone cubic (Fritsch & Carlson 1980) is much more accurate than linear on a smooth curve', () => {
    const table = sampled(10);
    for (const [key, f] of [
      ['n', nAnalytic],
      ['k', kAnalytic],
    ] as const) {
      const linear = maxError(table, 'linear', f, key);
      const cubic = maxError(table, 'monotone-cubic', f, key);
      expect(cubic).toBeLessThan(linear / 10);
    }
  });

  it('halving the step divides the linear error by ~4 (order 2) and the cubic error by ~8 (order 3)', () => {
    const e1 = maxError(sampled(10), 'linear', nAnalytic, 'n');
    const e2 = maxError(sampled(5), 'linear', nAnalytic, 'n');
    expect(Math.log2(e1 / e2)).toBeGreaterThan(1.9);
    const c1 = maxError(sampled(10), 'monotone-cubic', nAnalytic, 'n');
    const c2 = maxError(sampled(5), 'monotone-cubic', nAnalytic, 'n');
    expect(Math.log2(c1 / c2)).toBeGreaterThan(2.6);
  });

  it('monotone cubic never overshoots a step and keeps k ≥ 0 (the property Fritsch & Carlson 1980 prove)', () => {
    const table: NkTable = {
      wavelengthNm: [400, 410, 420, 430, 440, 450, 460],
      n: [1.5, 1.5, 1.5, 2.0, 2.0, 2.0, 2.0],
      k: [0, 0, 0, 0.3, 0, 0, 0],
    };
    const query = Array.from({ length: 601 }, (_, i) => 400 + i * 0.1);
    const { n, k } = evaluateTable(table, query, 'monotone-cubic');
    for (let i = 0; i < query.length; i++) {
      expect(n[i]).toBeGreaterThanOrEqual(1.5);
      expect(n[i]).toBeLessThanOrEqual(2.0);
      expect(k[i]).toBeGreaterThanOrEqual(0);
      expect(k[i]).toBeLessThanOrEqual(0.3);
      if (i > 0) expect(n[i]).toBeGreaterThanOrEqual(n[i - 1]);
    }
  });

  it('reproduces the table at its nodes, ends included', () => {
    const table = sampled(100);
    for (const method of ['linear', 'monotone-cubic'] as const) {
      const { n, k } = evaluateTable(table, table.wavelengthNm, method);
      expect(n).toEqual(table.n);
      expect(k).toEqual(table.k);
    }
  });

  it('refuses outside the measured range and says a table is never extrapolated', () => {
    const table = sampled(100);
    for (const w of [299.9, 1500.1]) {
      try {
        evaluateTable(table, [500, w]);
        expect.unreachable();
      } catch (err) {
        expect(err).toBeInstanceOf(InputError);
        expect((err as InputError).rule).toBe('outside-range');
        expect((err as InputError).message).toMatch(/only interpolated, never extrapolated \(fit a dispersion model/);
      }
    }
  });
});
