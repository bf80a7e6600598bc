/**
 * The Kramers-Kronig-consistent basis the check fits (after B. Johs and J. S. Hale,
 * phys. stat. sol. (a) 205, 715 (2008), published): ε2 as a sum of unit triangles (linear B-splines) on
 * knots that extend past the measured window, plus two loss-free poles for absorption far outside it,
 * plus a constant ε∞ in ε1. Every term is an exact KK pair, so any non-negative combination is a
 * causal ε and the misfit to measured data measures inconsistency.
 *
 * Knots: uniform in photon energy across the window (spacing h = window / intervals) and two more
 * intervals beyond each edge, then growing by GROWTH per step down towards 0 eV and up to about
 * max(3·E_max, E_max + 2·window), so absorption anywhere near the window can be represented.
 * The number of basis functions does not grow with the number of data points.
 */
import { poleEps1, xLogAbs } from './transform.ts';

const GROWTH = 1.6;
const EDGE_INTERVALS = 2;

export interface KkBasis {
  /** Knot energies in eV, ascending, the first is 0 or positive. */
  knotsEv: number[];
  /** Triangle j (0-based) has feet knotsEv[j], knotsEv[j+2] and apex knotsEv[j+1]. */
  triangleCount: number;
  /** Pole energies in eV (0 = Drude-like −1/E² term). */
  polesEv: number[];
  /** Columns: triangles, then poles, then the constant ε∞ (free sign). */
  columnCount: number;
  /** Knot spacing inside the window, eV. */
  spacingEv: number;
}

/** Lay out knots and poles for data spanning [minEv, maxEv] with `intervals` knot intervals inside it. */
export function makeKkBasis(minEv: number, maxEv: number, intervals: number): KkBasis {
  const span = maxEv - minEv;
  const h = span / intervals;
  const knots: number[] = [];
  for (let i = -EDGE_INTERVALS; i <= intervals + EDGE_INTERVALS; i++) knots.push(minEv + i * h);
  let step = h;
  while (knots[0] > 0) {
    step *= GROWTH;
    const next = knots[0] - step;
    knots.unshift(next < 0.25 * step ? 0 : next);
  }
  if (knots[0] < 0) knots[0] = 0;
  const top = Math.max(3 * maxEv, maxEv + 2 * span);
  step = h;
  while (knots[knots.length - 1] < top) {
    step *= GROWTH;
    knots.push(knots[knots.length - 1] + step);
  }
  const triangleCount = knots.length - 2;
  const polesEv = [0, 2 * knots[knots.length - 1]];
  return { knotsEv: knots, triangleCount, polesEv, columnCount: triangleCount + polesEv.length + 1, spacingEv: h };
}

/**
 * Fill the ε1 and ε2 rows of the design matrix at one photon energy (each of length columnCount).
 * ε1 of triangle (a, b, c) = (1/π)[H(E) + H(−E)], H(y) = −Σ s_m·g(y − x_m) (see transform.ts), computed
 * from g at every knot once per energy so each point costs two logarithms per knot.
 */
export function fillBasisRows(basis: KkBasis, energyEv: number, row1: Float64Array, row2: Float64Array, scratch: Float64Array): void {
  const knots = basis.knotsEv;
  for (let m = 0; m < knots.length; m++) scratch[m] = xLogAbs(energyEv - knots[m]) + xLogAbs(-energyEv - knots[m]);
  for (let j = 0; j < basis.triangleCount; j++) {
    const a = knots[j];
    const b = knots[j + 1];
    const c = knots[j + 2];
    const sa = 1 / (b - a);
    const sc = 1 / (c - b);
    row1[j] = -(sa * scratch[j] - (sa + sc) * scratch[j + 1] + sc * scratch[j + 2]) / Math.PI;
    row2[j] = energyEv <= a || energyEv >= c ? 0 : energyEv <= b ? (energyEv - a) * sa : (c - energyEv) * sc;
  }
  basis.polesEv.forEach((pole, i) => {
    // Loss-free pole ε1 = A/(Ep² − E²) with A ≥ 0: negative above the low pole, positive below the high one.
    row1[basis.triangleCount + i] = poleEps1(pole, energyEv);
    row2[basis.triangleCount + i] = 0;
  });
  row1[basis.columnCount - 1] = 1;
  row2[basis.columnCount - 1] = 0;
}
