import fc from 'fast-check';
import { describe, expect, it } from 'vitest';
import { epsFromNk, nkFromEps } from '../../src/optics/permittivity.ts';

// ε = N² with N = n + ik (common practice in thin-film optics, e.g. Fujiwara, Spectroscopic Ellipsometry, 2007, ch. 2).
const relClose = (a: number, b: number, scale: number) => Math.abs(a - b) <= 1e-12 * scale;

describe('complex permittivity ↔ n,k', () => {
  it('known pairs: glass, an absorber, an ideal metal (exact arithmetic, common practice)', () => {
    expect(epsFromNk(1.5, 0)).toEqual({ eps1: 2.25, eps2: 0 });
    expect(epsFromNk(2, 1)).toEqual({ eps1: 3, eps2: 4 });
    expect(nkFromEps(3, 4)).toEqual({ n: 2, k: 1 });
    expect(nkFromEps(-3, 4)).toEqual({ n: 1, k: 2 });
    expect(nkFromEps(-4, 0)).toEqual({ n: 0, k: 2 });
  });

  it('n,k → ε → n,k round trip for any n > 0, k ≥ 0 (property)', () => {
    fc.assert(
      fc.property(fc.double({ min: 1e-3, max: 50, noNaN: true }), fc.double({ min: 0, max: 50, noNaN: true }), (n, k) => {
        const e = epsFromNk(n, k);
        const back = nkFromEps(e.eps1, e.eps2);
        const scale = Math.hypot(n, k);
        expect(relClose(back.n, n, scale * 4)).toBe(true);
        expect(relClose(back.k, k, scale * 4)).toBe(true);
      }),
    );
  });

  it('ε → n,k → ε round trip on the principal branch, n ≥ 0 (property)', () => {
    fc.assert(
      fc.property(fc.double({ min: -1e4, max: 1e4, noNaN: true }), fc.double({ min: -1e4, max: 1e4, noNaN: true }), (eps1, eps2) => {
        fc.pre(Math.hypot(eps1, eps2) > 1e-9);
        const { n, k } = nkFromEps(eps1, eps2);
        expect(n).toBeGreaterThanOrEqual(0);
        const e = epsFromNk(n, k);
        const scale = Math.hypot(eps1, eps2);
        expect(Math.abs(e.eps1 - eps1)).toBeLessThanOrEqual(1e-12 * scale);
        expect(Math.abs(e.eps2 - eps2)).toBeLessThanOrEqual(1e-12 * scale);
      }),
    );
  });

  it('stays accurate where the naive formula cancels: a good metal (ε1 = −1e8, ε2 = 1e-2)', () => {
    // Exact: n = ε2/(2k) with k ≈ √|ε1| = 1e4, so n = 5e-7 (small compared with k; the naive √((|ε|+ε1)/2) gives 0).
    const { n, k } = nkFromEps(-1e8, 1e-2);
    expect(k).toBeCloseTo(1e4, 8);
    expect(Math.abs(n - 5e-7) / 5e-7).toBeLessThan(1e-12);
    const naiveN = Math.sqrt((Math.hypot(-1e8, 1e-2) + -1e8) / 2);
    expect(naiveN).toBe(0);
  });
});
