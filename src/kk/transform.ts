/**
 * Analytic Kramers-Kronig transform of a piecewise-linear ε2(E).
 *
 * For a causal medium (Lucarini, Saarinen, Peiponen & Vartiainen, "Kramers-Kronig Relations in Optical
 * Materials Research", Springer 2005, eq. 4.1):
 *   ε1(E) − ε∞ = (2/π) P∫₀^∞ ξ ε2(ξ) / (ξ² − E²) dξ = (1/π) [H(E) + H(−E)],
 * with H(y) = P∫₀^∞ ε2(ξ) / (ξ − y) dξ, because 2ξ/(ξ² − E²) = 1/(ξ − E) + 1/(ξ + E).
 *
 * Let ε2 be linear between nodes x_m, zero outside [x_0, x_M], with slope change s_m and jump J_m at
 * node m (value/slope right of the node minus left of it). Integrating segment by segment,
 * ∫ (f(y) + slope·(ξ − y)) / (ξ − y) dξ, and summing (the terms in the far cut-off cancel because
 * ε2 vanishes beyond x_M) gives, with g(u) = u·ln|u| (g(0) = 0):
 *   H(y) = −Σ_m [ s_m · g(y − x_m) + J_m · (ln|y − x_m| + 1) ].
 * For a triangle a < b < c of unit height (s = 1/(b−a), −1/(b−a) − 1/(c−b), 1/(c−b); no jumps) this is
 *   H(y) = −[g(y−a)/(b−a) − g(y−b)·(c−a)/((b−a)(c−b)) + g(y−c)/(c−b)],
 * the closed form used by B-spline/piecewise-linear KK-consistent ε2 representations (B. Johs and
 * J. S. Hale, phys. stat. sol. (a) 205, 715 (2008)). Derived here; verified against scipy's
 * principal-value quadrature in test/kk/transform.test.ts.
 * A jump (ε2 not falling to zero at an end) gives the logarithmic singularity of a truncated spectrum.
 */

/** u·ln|u| with its limit 0 at u = 0. */
export function xLogAbs(u: number): number {
  return u === 0 ? 0 : u * Math.log(Math.abs(u));
}

/** Slope changes and jumps of the piecewise-linear function through (nodes, values), zero outside. */
export interface Kinks {
  nodesEv: number[];
  slopeChange: number[];
  jump: number[];
}

export function kinksOfPiecewiseLinear(nodesEv: ArrayLike<number>, values: ArrayLike<number>): Kinks {
  const count = nodesEv.length;
  const slopeChange: number[] = [];
  const jump: number[] = [];
  for (let m = 0; m < count; m++) {
    const left = m > 0 ? (values[m] - values[m - 1]) / (nodesEv[m] - nodesEv[m - 1]) : 0;
    const right = m < count - 1 ? (values[m + 1] - values[m]) / (nodesEv[m + 1] - nodesEv[m]) : 0;
    slopeChange.push(right - left);
    jump.push(m === 0 ? values[0] : m === count - 1 ? -values[m] : 0);
  }
  return { nodesEv: Array.from(nodesEv), slopeChange, jump };
}

/** H(y) = P∫ ε2(ξ)/(ξ − y) dξ for the piecewise-linear ε2 described by its kinks. */
export function hilbertOfKinks(kinks: Kinks, y: number): number {
  let sum = 0;
  for (let m = 0; m < kinks.nodesEv.length; m++) {
    const u = y - kinks.nodesEv[m];
    sum += kinks.slopeChange[m] * xLogAbs(u);
    if (kinks.jump[m] !== 0) sum += kinks.jump[m] * (Math.log(Math.abs(u)) + 1);
  }
  return -sum;
}

/**
 * ε1(E) − ε∞ for ε2 linear between the given nodes (energies in eV, ascending, ≥ 0) and zero outside them.
 * Exact for that ε2; used by the consistency check's basis and by the model-consistency tests.
 */
export function kkEps1FromPiecewiseLinearEps2(nodesEv: ArrayLike<number>, eps2: ArrayLike<number>, energyEv: ArrayLike<number>): number[] {
  const kinks = kinksOfPiecewiseLinear(nodesEv, eps2);
  const out: number[] = [];
  for (let i = 0; i < energyEv.length; i++) {
    const e = energyEv[i];
    out.push((hilbertOfKinks(kinks, e) + hilbertOfKinks(kinks, -e)) / Math.PI);
  }
  return out;
}

/** Unit triangle ε2 with feet a, c and apex b, at energy E. */
export function triangleEps2(a: number, b: number, c: number, energyEv: number): number {
  if (energyEv <= a || energyEv >= c) return 0;
  return energyEv <= b ? (energyEv - a) / (b - a) : (c - energyEv) / (c - b);
}

/**
 * A loss-free pole: ε = 1/(Ep² − E²), the zero-width limit of a Lorentz oscillator (ε2 a delta at Ep,
 * an exact KK pair; Johs & Hale 2008 use such poles for absorption outside the measured window).
 * Ep = 0 gives −1/E², free-carrier (Drude) absorption at zero energy.
 */
export function poleEps1(poleEv: number, energyEv: number): number {
  return 1 / (poleEv * poleEv - energyEv * energyEv);
}
