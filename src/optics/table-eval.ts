/**
 * n,k of a tabulated material at any wavelength inside its measured range, by interpolation
 * (linear by default; monotone cubic, Fritsch & Carlson 1980, on request — it never overshoots, so k stays ≥ 0).
 * Outside the range there is no honest answer from a table: the refusal says a fitted model is needed.
 */
import { InputError } from '../errors.ts';
import { tableRangeNm, type NkTable } from '../table.ts';
import { makeInterpolant, type InterpolationMethod } from './interpolate.ts';

export const INTERPOLATION_METHODS: readonly InterpolationMethod[] = ['linear', 'monotone-cubic'];

/** Queries this close to an end of the range (relative) count as the end: guards against rounding in unit conversions. */
const RANGE_SLACK = 1e-12;

export function evaluateTable(table: NkTable, wavelengthsNm: number[], method: InterpolationMethod = 'linear'): { n: number[]; k: number[] } {
  const [minNm, maxNm] = tableRangeNm(table);
  const clamped = wavelengthsNm.map((w) => {
    if (!Number.isFinite(w)) throw new InputError('bad-wavelength', `wavelength ${w} is not a finite number`);
    if (w < minNm * (1 - RANGE_SLACK) || w > maxNm * (1 + RANGE_SLACK)) {
      throw new InputError(
        'outside-range',
        `${w} nm is outside the measured range ${minNm}–${maxNm} nm; a table is only interpolated, never extrapolated (fit a dispersion model to evaluate beyond it)`,
      );
    }
    return Math.min(maxNm, Math.max(minNm, w));
  });
  const nAt = makeInterpolant(table.wavelengthNm, table.n, method);
  const kAt = makeInterpolant(table.wavelengthNm, table.k, method);
  return { n: clamped.map(nAt), k: clamped.map(kAt) };
}
