/**
 * Statistics of the misfit Δ = measured − KK-reconstructed: noise level, systematic (smoothed) misfit,
 * and a per-band breakdown. Pure functions on arrays.
 */

/**
 * Point-to-point noise of a residual: σ ≈ 1.4826·median|Δᵢ − Δᵢ₋₁| / √2. Differences of neighbours cancel
 * the smooth (systematic) part; the median and 1.4826 make it a robust Gaussian σ (difference-based noise
 * estimate with the MAD scale factor: common practice).
 */
export function differenceNoise(residual: ArrayLike<number>): number {
  const diffs: number[] = [];
  for (let i = 1; i < residual.length; i++) diffs.push(Math.abs(residual[i] - residual[i - 1]));
  if (diffs.length === 0) return 0;
  diffs.sort((a, b) => a - b);
  const mid = diffs.length >> 1;
  const median = diffs.length % 2 ? diffs[mid] : (diffs[mid - 1] + diffs[mid]) / 2;
  return (1.4826 * median) / Math.SQRT2;
}

/**
 * Moving average of `values` over every point whose energy lies within ±halfWidthEv of point i
 * (energies ascending or descending), with the number of points averaged.
 */
export function movingAverage(energyEv: ArrayLike<number>, values: ArrayLike<number>, halfWidthEv: number): { mean: number[]; count: number[] } {
  const total = values.length;
  const order = Array.from({ length: total }, (_, i) => i).sort((a, b) => energyEv[a] - energyEv[b]);
  const prefix = new Float64Array(total + 1);
  order.forEach((idx, r) => (prefix[r + 1] = prefix[r] + values[idx]));
  const mean: number[] = new Array(total);
  const count: number[] = new Array(total);
  let lo = 0;
  let hi = 0;
  for (let r = 0; r < total; r++) {
    const e = energyEv[order[r]];
    while (energyEv[order[lo]] < e - halfWidthEv) lo++;
    while (hi < total && energyEv[order[hi]] <= e + halfWidthEv) hi++;
    mean[order[r]] = (prefix[hi] - prefix[lo]) / (hi - lo);
    count[order[r]] = hi - lo;
  }
  return { mean, count };
}

/** Index of the largest |value| (first one on ties). */
export function argMaxAbs(values: ArrayLike<number>): number {
  let best = 0;
  for (let i = 1; i < values.length; i++) if (Math.abs(values[i]) > Math.abs(values[best])) best = i;
  return best;
}

export function rms(values: ArrayLike<number>): number {
  let sum = 0;
  for (let i = 0; i < values.length; i++) sum += values[i] * values[i];
  return values.length ? Math.sqrt(sum / values.length) : 0;
}

/**
 * Spectral bands of the breakdown, in nm: UV below 380 nm and visible 380–780 nm (the CIE limits of the
 * visible, common practice), near IR 780–3000 nm and IR beyond (ISO 20473 divisions, from memory).
 */
export const SPECTRAL_BANDS: readonly { band: string; fromNm: number; toNm: number }[] = [
  { band: 'UV', fromNm: 0, toNm: 380 },
  { band: 'visible', fromNm: 380, toNm: 780 },
  { band: 'NIR', fromNm: 780, toNm: 3000 },
  { band: 'IR', fromNm: 3000, toNm: Infinity },
];
