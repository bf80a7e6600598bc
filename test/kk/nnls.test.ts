import { readFileSync } from 'node:fs';
import fc from 'fast-check';
import { describe, expect, it } from 'vitest';
import { nnlsNormal } from '../../src/kk/nnls.ts';

const reference = JSON.parse(readFileSync(new URL('../reference/kk-nnls-scipy.json', import.meta.url), 'utf8'));

function normalEquations(a: number[][], b: number[]) {
  const cols = a[0].length;
  const gram = new Float64Array(cols * cols);
  const rhs = new Float64Array(cols);
  a.forEach((row, r) => {
    for (let p = 0; p < cols; p++) {
      rhs[p] += row[p] * b[r];
      for (let q = 0; q < cols; q++) gram[p * cols + q] += row[p] * row[q];
    }
  });
  return { gram, rhs, cols };
}

describe('Lawson–Hanson NNLS on the normal equations', () => {
  // reference library: scipy 1.17.1 scipy.optimize.nnls on seeded random problems (scripts/gen-kk-cases.py)
  reference.problems.forEach((problem: { A: number[][]; b: number[]; x: number[] }, index: number) => {
    it(`matches scipy.optimize.nnls on problem ${index + 1}`, () => {
      const { gram, rhs } = normalEquations(problem.A, problem.b);
      const { x } = nnlsNormal(gram, rhs);
      problem.x.forEach((v, i) => expect(x[i]).toBeCloseTo(v, 9));
    });
  });

  it('satisfies the Karush-Kuhn-Tucker conditions on random problems (Lawson & Hanson 1974, ch. 23)', () => {
    const matrix = fc.array(fc.array(fc.double({ min: -5, max: 5, noNaN: true }), { minLength: 4, maxLength: 4 }), { minLength: 6, maxLength: 12 });
    fc.assert(
      fc.property(matrix, fc.array(fc.double({ min: -5, max: 5, noNaN: true }), { minLength: 12, maxLength: 12 }), (a, bAll) => {
        const { gram, rhs, cols } = normalEquations(a, bAll.slice(0, a.length));
        for (let p = 0; p < cols; p++) gram[p * cols + p] += 1e-9; // keep it positive definite
        const { x } = nnlsNormal(gram, rhs);
        const scale = 1 + Math.max(...Array.from(rhs, Math.abs));
        for (let p = 0; p < cols; p++) {
          let w = rhs[p];
          for (let q = 0; q < cols; q++) w -= gram[p * cols + q] * x[q];
          expect(x[p]).toBeGreaterThanOrEqual(0);
          if (x[p] > 0) expect(Math.abs(w)).toBeLessThan(1e-8 * scale);
          else expect(w).toBeLessThan(1e-8 * scale);
        }
      }),
      { numRuns: 200, seed: 4 },
    );
  });

  it('leaves free variables unconstrained', () => {
    // min (x0 + 3)² + (x1 − 2)²: x0 free goes to −3, x1 ≥ 0 to 2
    const gram = new Float64Array([1, 0, 0, 1]);
    const { x } = nnlsNormal(gram, new Float64Array([-3, 2]), new Set([0]));
    expect(x[0]).toBeCloseTo(-3, 12);
    expect(x[1]).toBeCloseTo(2, 12);
  });
});
