/** Building the spectral grid and the guess data a model works on (pure). */
import { HC_EV_NM } from '../optics/units.ts';
import type { SpectralGrid } from './types.ts';
import { maxOf } from '../optics/extremes.ts';

/** Grid with wavelength in nm and µm and photon energy E[eV] = hc/λ (CODATA 2018). */
export function spectralGrid(wavelengthNm: ArrayLike<number>): SpectralGrid {
  const count = wavelengthNm.length;
  const nm = Float64Array.from(wavelengthNm);
  const um = new Float64Array(count);
  const ev = new Float64Array(count);
  for (let i = 0; i < count; i++) {
    um[i] = nm[i] / 1e3;
    ev[i] = HC_EV_NM / nm[i];
  }
  return { wavelengthNm: nm, wavelengthUm: um, energyEv: ev };
}

/** Indices of local maxima of y (3-point moving average to ride over noise), highest first. */
export function peakIndices(y: ArrayLike<number>): number[] {
  const count = y.length;
  const smooth = new Float64Array(count);
  for (let i = 0; i < count; i++) {
    const lo = Math.max(0, i - 1);
    const hi = Math.min(count - 1, i + 1);
    let sum = 0;
    for (let j = lo; j <= hi; j++) sum += y[j];
    smooth[i] = sum / (hi - lo + 1);
  }
  const peaks: number[] = [];
  for (let i = 1; i < count - 1; i++) {
    if (smooth[i] > smooth[i - 1] && smooth[i] >= smooth[i + 1]) peaks.push(i);
  }
  const max = maxOf(smooth);
  return peaks.filter((i) => smooth[i] > 0.1 * max).sort((a, b) => smooth[b] - smooth[a]);
}

/**
 * Full width at half maximum (in the x unit) of the peak of y at index `peak`, walking out to
 * where y falls below half; falls back to `fallback` when a side never falls below half.
 */
export function halfWidth(x: ArrayLike<number>, y: ArrayLike<number>, peak: number, fallback: number): number {
  const half = y[peak] / 2;
  let lo = peak;
  while (lo > 0 && y[lo] > half) lo--;
  let hi = peak;
  while (hi < y.length - 1 && y[hi] > half) hi++;
  const loOk = y[lo] <= half;
  const hiOk = y[hi] <= half;
  if (loOk && hiOk) return Math.abs(x[hi] - x[lo]);
  if (loOk) return 2 * Math.abs(x[peak] - x[lo]);
  if (hiOk) return 2 * Math.abs(x[hi] - x[peak]);
  return fallback;
}

export function clamp(value: number, [lo, hi]: [number, number]): number {
  if (!Number.isFinite(value)) return (lo + hi) / 2;
  return Math.min(hi, Math.max(lo, value));
}

/** Parameter name with an oscillator suffix when a term has several: ("A", 2, 3) → "A2", ("A", 1, 1) → "A". */
export function oscillatorName(base: string, index: number, count: number): string {
  return count > 1 ? `${base}${index}` : base;
}
