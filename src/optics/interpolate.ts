/**
 * Interpolation of tabulated values on an ascending grid.
 * - linear: piecewise-linear between neighbouring points.
 * - monotone cubic: piecewise cubic Hermite with Fritsch–Carlson slopes (F. N. Fritsch and
 *   R. E. Carlson, SIAM J. Numer. Anal. 17, 238 (1980), published), which never overshoots the data.
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

/** Fritsch–Carlson slopes at every node (steps 1–5 of the 1980 paper, with the α²+β² ≤ 9 limiter). */
export function monotoneSlopes(x: ArrayLike<number>, y: ArrayLike<number>): number[] {
  const count = x.length;
  const delta: number[] = [];
  for (let i = 0; i < count - 1; i++) delta.push((y[i + 1] - y[i]) / (x[i + 1] - x[i]));
  const m: number[] = new Array(count);
  m[0] = delta[0];
  m[count - 1] = delta[count - 2];
  for (let i = 1; i < count - 1; i++) {
    m[i] = delta[i - 1] * delta[i] <= 0 ? 0 : (delta[i - 1] + delta[i]) / 2;
  }
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

/** Cubic Hermite evaluation with precomputed slopes m. */
export function interpolateHermite(x: ArrayLike<number>, y: ArrayLike<number>, m: ArrayLike<number>, xq: number): number {
  const i = bracketIndex(x, xq);
  const h = x[i + 1] - x[i];
  const t = (xq - x[i]) / h;
  const t2 = t * t;
  const t3 = t2 * t;
  const h00 = 2 * t3 - 3 * t2 + 1;
  const h10 = t3 - 2 * t2 + t;
  const h01 = -2 * t3 + 3 * t2;
  const h11 = t3 - t2;
  return h00 * y[i] + h10 * h * m[i] + h01 * y[i + 1] + h11 * h * m[i + 1];
}

/** Build an interpolant for (x, y) by the chosen method. */
export function makeInterpolant(x: ArrayLike<number>, y: ArrayLike<number>, method: InterpolationMethod): (xq: number) => number {
  if (method === 'linear') return (xq) => interpolateLinear(x, y, xq);
  const m = monotoneSlopes(x, y);
  return (xq) => interpolateHermite(x, y, m, xq);
}
