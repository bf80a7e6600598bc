/**
 * Complex permittivity ε = ε1 + iε2 and complex refractive index N = n + ik (sign convention with k ≥ 0
 * for absorbing media, common practice in thin-film optics): ε = N², so ε1 = n² − k², ε2 = 2nk.
 */

export interface Nk {
  n: number;
  k: number;
}

export interface Eps {
  eps1: number;
  eps2: number;
}

export function epsFromNk(n: number, k: number): Eps {
  return { eps1: n * n - k * k, eps2: 2 * n * k };
}

/**
 * n,k from ε1,ε2 by N = √ε on the principal branch, written to avoid cancellation:
 * |ε| = hypot(ε1, ε2); the larger of n, k comes from √((|ε| ± ε1)/2) without subtraction of near-equal
 * numbers, the other from ε2 / (2·larger). (Standard stable complex square root, e.g. Numerical Recipes §5.4.)
 */
export function nkFromEps(eps1: number, eps2: number): Nk {
  const mod = Math.hypot(eps1, eps2);
  if (mod === 0) return { n: 0, k: 0 };
  if (eps1 >= 0) {
    const n = Math.sqrt((mod + eps1) / 2);
    return { n, k: eps2 / (2 * n) };
  }
  const kAbs = Math.sqrt((mod - eps1) / 2);
  // eps2 ≥ 0 ⇒ k ≥ 0; keep the sign of eps2 for k, n = ε2 / (2k) is then ≥ 0.
  const k = eps2 < 0 ? -kAbs : kAbs;
  return { n: eps2 / (2 * k), k };
}
