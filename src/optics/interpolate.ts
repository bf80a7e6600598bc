/**
 * Interpolation of tabulated values on an ascending grid.
 * - linear: piecewise-linear between neighbouring points.
 * - monotone cubic: piecewise cubic Hermite with Fritsch–Carlson slopes (F. N. Fritsch and
 *   R. E. Carlson, SIAM J. Numer. Anal. 17, 238 (1980)), which never overshoots the data.
 * Callers guarantee x is strictly increasing and the query lies in [x[0], x[last]].
 */

export type InterpolationMethod = 'linear' | 'monotone-cubic';

/** Index i with x[i] ≤ xq ≤ x[i+1] (binary search). */
export function bracketIndex(x: ArrayLike<number>, xq: number): number {
  let lo = 0;
  let hi = x.length - 1;
  while (hi - lo > 1) {
    const mid = (lo + hi) >> 1;
    if (x[mid] <= xq) lo = mid;
    else hi = mid;
  }
  return lo;
}

export function interpolateLinear(x: ArrayLike<number>, y: ArrayLike<number>, xq: number): number {
  const i = bracketIndex(x, xq);
  const t = (xq - x[i]) / (x[i + 1] - x[i]);
  return y[i] + t * (y[i + 1] - y[i]);
}

/**
 * Fritsch–Carlson slopes at every node (steps 1–5 of the 1980 paper, with the α²+β² ≤ 9 limiter).
 * Initial slopes are the three-point (second-order) differences, weighted for uneven spacing, and zero at
 * local extrema; the end slopes use the one-sided three-point formula with the shape-preserving guards of
 * C. Moler's pchip (Numerical Computing with MATLAB, 2004, §3.4). With plain secants at the ends
 * the first and last intervals would be only as accurate as linear interpolation.
 */
export function monotoneSlopes(x: ArrayLike<number>, y: ArrayLike<number>): number[] {
  const count = x.length;
  const h: number[] = [];
  const delta: number[] = [];
  for (let i = 0; i < count - 1; i++) {
    h.push(x[i + 1] - x[i]);
    delta.push((y[i + 1] - y[i]) / h[i]);
  }
  const m: number[] = new Array(count);
  if (count === 2) {
    m[0] = delta[0];
    m[1] = delta[0];
    return m;
  }
  for (let i = 1; i < count - 1; i++) {
    m[i] = delta[i - 1] * delta[i] <= 0 ? 0 : (h[i] * delta[i - 1] + h[i - 1] * delta[i]) / (h[i - 1] + h[i]);
  }
  m[0] = endSlope(h[0], h[1], delta[0], delta[1]);
  m[count - 1] = endSlope(h[count - 2], h[count - 3], delta[count - 2], delta[count - 3]);
  for (let i = 0; i < count - 1; i++) {
    if (delta[i] === 0) {
      m[i] = 0;
      m[i + 1] = 0;
      continue;
    }
    const a = m[i] / delta[i];
    const b = m[i + 1] / delta[i];
    const s = a * a + b * b;
    if (s > 9) {
      const tau = 3 / Math.sqrt(s);
      m[i] = tau * a * delta[i];
      m[i + 1] = tau * b * delta[i];
    }
  }
  return m;
}

/** One-sided three-point slope at an end node, kept to the sign of the end secant and within 3× it. */
function endSlope(h0: number, h1: number, delta0: number, delta1: number): number {
  const d = ((2 * h0 + h1) * delta0 - h0 * delta1) / (h0 + h1);
  if (Math.sign(d) !== Math.sign(delta0)) return 0;
  if (Math.sign(delta0) !== Math.sign(delta1) && Math.abs(d) > Math.abs(3 * delta0)) return 3 * delta0;
  return d;
}

/** Cubic Hermite evaluation with precomputed slopes m. */
export function interpolateHermite(x: ArrayLike<number>, y: ArrayLike<number>, m: ArrayLike<number>, xq: number): number {
  const i = bracketIndex(x, xq);
  const h = x[i + 1] - x[i];
  const t = (xq - x[i]) / h;
  const t2 = t * t;
  const t3 = t2 * t;
  const h10 = t3 - 2 * t2 + t;
  const h01 = -2 * t3 + 3 * t2;
  const h11 = t3 - t2;
  // h00·y0 + h01·y1 written as y0 + h01·(y1 − y0) (h00 = 1 − h01): exact on flat segments, so a plateau
  // in the data is not left by a rounding error.
  return y[i] + h01 * (y[i + 1] - y[i]) + h * (h10 * m[i] + h11 * m[i + 1]);
}

/** Build an interpolant for (x, y) by the chosen method. */
export function makeInterpolant(x: ArrayLike<number>, y: ArrayLike<number>, method: InterpolationMethod): (xq: number) => number {
  if (method === 'linear') return (xq) => interpolateLinear(x, y, xq);
  const m = monotoneSlopes(x, y);
  return (xq) => interpolateHermite(x, y, m, xq);
}
