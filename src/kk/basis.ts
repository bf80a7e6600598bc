/**
 * The Kramers-Kronig-consistent basis the check fits (after B. Johs and J. S. Hale,
 * phys. stat. sol. (a) 205, 715 (2008)): ε2 as a sum of unit triangles (linear B-splines) on
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
/** A peak narrower than this many knot spacings (FWHM) gets oscillator columns. */
const SHARP_SPACINGS = 4;
/** Oscillator columns per sharp peak: centres E_peak + offset·FWHM, widths factor·FWHM. */
const CENTRE_OFFSETS = [-0.2, 0, 0.2];
const WIDTH_FACTORS = [0.7, 1, 1.4];
/** At most this many sharp peaks get columns (the most prominent first). */
const MAX_SHARP_PEAKS = 6;

/**
 * For each point i of y: where the run of non-decreasing values that ends at i starts (`start[i]`, the lowest l
 * with y[l] ≤ … ≤ y[i]) and where the run of non-increasing values from i ends (`end[i]`). Found once, O(n):
 * walking them from every local maximum took O(n²) on measured tables, whose rounding makes a staircase of small
 * maxima.
 */
export function flankingRuns(y: ArrayLike<number>): { start: Int32Array; end: Int32Array } {
  const start = new Int32Array(y.length);
  for (let i = 1; i < y.length; i++) start[i] = y[i - 1] <= y[i] ? start[i - 1] : i;
  const end = new Int32Array(y.length).fill(y.length - 1);
  for (let i = y.length - 2; i >= 0; i--) end[i] = y[i + 1] <= y[i] ? end[i + 1] : i;
  return { start, end };
}

/**
 * Narrow ε2 peaks of the data → oscillator columns. A peak is a local maximum whose prominence above the
 * higher of its two flanking minima exceeds `minProminence` (10× the ε2 noise), with a full width at half
 * that prominence narrower than SHARP_SPACINGS knot spacings but at least 3 sample spacings (a narrower
 * one is not resolved by the data). Each gets a small grid of unit Lorentz columns around its position
 * and width; NNLS combines them (and the triangles) with non-negative weights, so the representation
 * stays causal by construction.
 */
export function sharpPeakColumns(
  energyEv: ArrayLike<number>,
  eps2: ArrayLike<number>,
  spacingEv: number,
  minProminence: number,
): { e0: number; gamma: number }[] {
  const order = Array.from({ length: energyEv.length }, (_, i) => i).sort((a, b) => energyEv[a] - energyEv[b]);
  const e = order.map((i) => energyEv[i]);
  const y = order.map((i) => eps2[i]);
  const { start: runStart, end: runEnd } = flankingRuns(y);
  const peaks: { e0: number; fwhm: number; prominence: number }[] = [];
  for (let i = 1; i < y.length - 1; i++) {
    if (!(y[i] > y[i - 1] && y[i] >= y[i + 1])) continue;
    const l = runStart[i];
    const r = runEnd[i];
    const base = Math.max(y[l], y[r]);
    const prominence = y[i] - base;
    if (!(prominence > minProminence)) continue;
    const half = base + prominence / 2;
    let a = i;
    while (a > l && y[a - 1] > half) a--;
    let b = i;
    while (b < r && y[b + 1] > half) b++;
    if (a === l || b === r) continue; // half level not reached on one side: not a resolved peak
    const left = e[a - 1] + ((half - y[a - 1]) / (y[a] - y[a - 1])) * (e[a] - e[a - 1]);
    const right = e[b] + ((y[b] - half) / (y[b] - y[b + 1])) * (e[b + 1] - e[b]);
    const fwhm = right - left;
    const sample = (e[r] - e[l]) / Math.max(1, r - l);
    if (fwhm < SHARP_SPACINGS * spacingEv && fwhm >= 3 * sample) peaks.push({ e0: e[i], fwhm, prominence });
  }
  peaks.sort((p, q) => q.prominence - p.prominence);
  return peaks
    .slice(0, MAX_SHARP_PEAKS)
    .flatMap(({ e0, fwhm }) => CENTRE_OFFSETS.flatMap((o) => WIDTH_FACTORS.map((f) => ({ e0: e0 + o * fwhm, gamma: f * fwhm }))));
}
const EDGE_INTERVALS = 2;

export interface KkBasis {
  /** Knot energies in eV, ascending, the first is 0 or positive. */
  knotsEv: number[];
  /** Triangle j (0-based) has feet knotsEv[j], knotsEv[j+2] and apex knotsEv[j+1]. */
  triangleCount: number;
  /** Pole energies in eV (0 = Drude-like −1/E² term). */
  polesEv: number[];
  /**
   * Lorentz oscillator columns 1/(E0² − E² − iΓE) (an exact KK pair, textbook) placed at narrow ε2 peaks
   * of the data (sharpPeakColumns), which triangles on the window's knot spacing cannot follow.
   */
  oscillators: { e0: number; gamma: number }[];
  /** Columns: triangles, then poles, then oscillators, then the constant ε∞ (free sign). */
  columnCount: number;
  /** Knot spacing inside the window, eV. */
  spacingEv: number;
}

/** Lay out knots and poles for data spanning [minEv, maxEv] with `intervals` knot intervals inside it. */
export function makeKkBasis(minEv: number, maxEv: number, intervals: number, oscillators: { e0: number; gamma: number }[] = []): KkBasis {
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
  return { knotsEv: knots, triangleCount, polesEv, oscillators, columnCount: triangleCount + polesEv.length + oscillators.length + 1, spacingEv: h };
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
  const first = basis.triangleCount + basis.polesEv.length;
  basis.oscillators.forEach(({ e0, gamma }, i) => {
    // 1/(E0² − E² − iΓE) = (E0² − E² + iΓE)/((E0² − E²)² + Γ²E²)
    const re = e0 * e0 - energyEv * energyEv;
    const im = gamma * energyEv;
    const den = re * re + im * im;
    row1[first + i] = re / den;
    row2[first + i] = im / den;
  });
  row1[basis.columnCount - 1] = 1;
  row2[basis.columnCount - 1] = 0;
}
