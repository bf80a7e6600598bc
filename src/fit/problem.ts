/**
 * The least-squares problem: which rows and quantities are fitted, with which weights.
 * Residuals are whitened, rᵢ = (yᵢ − modelᵢ)/σᵢ, so χ² = Σ rᵢ² and the fitter never needs the
 * library's weights option (see DEVELOPERS.md, "Fitter").
 */
import { InputError } from '../errors.ts';
import type { ModelQuantity, ModelValues } from '../models/catalogue.ts';
import { guessData } from '../models/guess-data.ts';
import type { GuessData, SpectralGrid } from '../models/types.ts';
import type { NkTable } from '../table.ts';
import type { FitTarget } from './types.ts';

export interface FitProblem {
  grid: SpectralGrid;
  data: GuessData;
  /** Quantity pair the model is evaluated as. */
  quantity: ModelQuantity;
  /** Fit the real part (n or ε1) / the imaginary part (k or ε2). */
  useRe: boolean;
  useIm: boolean;
  /** Measured values in residual order: the real parts of all rows, then the imaginary parts. */
  y: Float64Array;
  /** 1/σ per residual (1 when unweighted). */
  invSigma: Float64Array;
  weighted: boolean;
  /** How the residuals are weighted: the table's sigma columns, σ ∝ |value| (relative), or the estimated n/k noise ratio. */
  weighting: FitWeighting;
  warnings: string[];
}

/** sigma: the table's sigma columns; relative: σ = r·max(|value|, floor); estimated: the n/k noise ratio from the data. */
export type FitWeighting = 'sigma' | 'relative' | 'estimated';

export interface ProblemOptions {
  rangeNm?: [number, number];
  /** False for a model with k ≡ 0: the imaginary part is then not fitted (it says nothing about the parameters). */
  absorbing?: boolean;
  /** 'relative' weights σ ∝ |value| instead of the default (sigma columns when present, else estimated). */
  weights?: 'auto' | 'relative';
}

/**
 * Floor of |value| in relative weighting, per fitted quantity: 1 % of its largest magnitude and at least 1e-4,
 * so k = 0 or ε1 crossing zero do not get an infinite weight (common practice).
 */
export const RELATIVE_FLOOR_FRACTION = 0.01;
export const RELATIVE_FLOOR_MIN = 1e-4;

/** The rows of the table inside `rangeNm` (all rows without one). */
export function rowsInRange(table: NkTable, rangeNm?: [number, number]): number[] {
  const [lo, hi] = rangeNm ?? [-Infinity, Infinity];
  const rows: number[] = [];
  for (let i = 0; i < table.wavelengthNm.length; i++) if (table.wavelengthNm[i] >= lo && table.wavelengthNm[i] <= hi) rows.push(i);
  return rows;
}

export function buildProblem(table: NkTable, target: FitTarget, options: ProblemOptions = {}): FitProblem {
  const { rangeNm } = options;
  const rows = rowsInRange(table, rangeNm);
  if (rows.length < 3) {
    const span = `${table.wavelengthNm[0]}–${table.wavelengthNm[table.wavelengthNm.length - 1]} nm`;
    throw rangeNm
      ? new InputError(
          'range-too-narrow',
          `the fit range ${rangeNm[0]}–${rangeNm[1]} nm keeps ${rows.length} of the table's ${table.wavelengthNm.length} rows (${span}); at least 3 are needed: widen the range`,
        )
      : new InputError('too-few-rows', `the table has ${rows.length} rows (${span}); a fit needs at least 3, and more rows than free parameters`);
  }
  const pick = (a: number[]) => {
    const out = new Array<number>(rows.length);
    for (let j = 0; j < rows.length; j++) out[j] = a[rows[j]];
    return out;
  };
  const n = pick(table.n);
  const k = pick(table.k);
  const data = guessData(pick(table.wavelengthNm), n, k);
  const quantity: ModelQuantity = target === 'eps' ? 'eps' : 'nk';
  const absorbing = options.absorbing ?? true;
  if (!absorbing && target === 'k') throw new InputError('target-not-absorbing', 'the model has k ≡ 0 everywhere, so it cannot be fitted to k alone');
  const useRe = target !== 'k';
  // a model with k ≡ 0 gets nothing from the k rows but twice the count of points
  const useIm = target !== 'n' && absorbing;
  const warnings: string[] = [];
  if (!absorbing && target !== 'n') {
    let kMax = 0;
    for (const v of k) kMax = Math.max(kMax, Math.abs(v));
    if (kMax > 0)
      warnings.push(`the model has k ≡ 0 but the table's k reaches ${+kMax.toPrecision(3)}: only ${quantity === 'eps' ? 'ε1' : 'n'} is fitted`);
  }
  const relative = options.weights === 'relative';
  const sigma = relative ? undefined : sigmas(table, rows, quantity, n, k, useRe, useIm, warnings);
  const re = quantity === 'eps' ? data.eps1 : data.n;
  const im = quantity === 'eps' ? data.eps2 : data.k;
  const rowCount = re.length;
  const y = new Float64Array((useRe ? rowCount : 0) + (useIm ? rowCount : 0));
  if (useRe) y.set(re);
  if (useIm) y.set(im, useRe ? rowCount : 0);
  let invSigma: Float64Array;
  if (sigma) {
    invSigma = new Float64Array(sigma.length);
    for (let i = 0; i < sigma.length; i++) invSigma[i] = 1 / sigma[i];
  } else invSigma = relative ? proportionalWeights(re, im, useRe, useIm) : relativeWeights(re, im, useRe, useIm);
  // the guess data carry the grid already (GuessData extends SpectralGrid)
  const grid: SpectralGrid = { wavelengthNm: data.wavelengthNm, wavelengthUm: data.wavelengthUm, energyEv: data.energyEv };
  const weighting: FitWeighting = sigma ? 'sigma' : relative ? 'relative' : 'estimated';
  return { grid, data, quantity, useRe, useIm, y, invSigma, weighted: sigma !== undefined, weighting, warnings };
}

/** 1/σ with σ = max(|value|, floor) per quantity (relative weighting; the common scale r is left to s² = χ²/ν). */
function proportionalWeights(re: Float64Array, im: Float64Array, useRe: boolean, useIm: boolean): Float64Array {
  const parts = [...(useRe ? [re] : []), ...(useIm ? [im] : [])];
  const out = new Float64Array(parts.length * re.length);
  parts.forEach((values, q) => {
    let max = 0;
    for (const v of values) max = Math.max(max, Math.abs(v));
    const floor = Math.max(RELATIVE_FLOOR_FRACTION * max, RELATIVE_FLOOR_MIN);
    for (let i = 0; i < values.length; i++) out[q * values.length + i] = 1 / Math.max(Math.abs(values[i]), floor);
  });
  return out;
}

/**
 * σ per residual from the table's sigma columns (ε: σε1 = √((2nσn)² + (2kσk)²), σε2 = √((2kσn)² + (2nσk)²),
 * first-order propagation through ε = N², common practice); undefined when a needed column is missing.
 */
function sigmas(
  table: NkTable,
  rows: number[],
  quantity: ModelQuantity,
  n: number[],
  k: number[],
  useRe: boolean,
  useIm: boolean,
  warnings: string[],
): number[] | undefined {
  if (quantity === 'eps' && table.sigmaEps1 && table.sigmaEps2) return epsSigmas(table, rows, useRe, useIm);
  // ε1 = n² − k² needs σk only where k is given; n alone (a model with k ≡ 0) needs σn only
  const needN = quantity === 'eps' || useRe;
  const needK = useIm || (quantity === 'eps' && table.sigmaK !== undefined);
  const hasN = table.sigmaN !== undefined;
  const hasK = table.sigmaK !== undefined;
  if ((needN && !hasN) || (needK && !hasK)) {
    if (hasN || hasK) warnings.push(`the table gives sigma for ${hasN ? 'n' : 'k'} only: the fit is unweighted and reduced χ² is not reported`);
    return undefined;
  }
  const count = rows.length;
  const out = new Array<number>((useRe ? count : 0) + (useIm ? count : 0));
  const imAt = useRe ? count : 0;
  for (let j = 0; j < count; j++) {
    const row = rows[j];
    const sn = table.sigmaN?.[row] ?? 0;
    const sk = table.sigmaK?.[row] ?? 0;
    if ((needN && !(sn > 0)) || (needK && !(sk > 0))) {
      throw new InputError(
        'bad-sigma',
        `sigma must be positive to weight a fit, got sigma_n=${sn}, sigma_k=${sk} at ${table.wavelengthNm[row]} nm (row ${row + 1} of the table)`,
      );
    }
    // √(a² + b²) written out: Math.hypot is several times slower in V8
    const a = 2 * n[j] * sn;
    const b = 2 * k[j] * sk;
    const c = 2 * k[j] * sn;
    const d = 2 * n[j] * sk;
    if (useRe) out[j] = quantity === 'eps' ? Math.sqrt(a * a + b * b) : sn;
    if (useIm) out[imAt + j] = quantity === 'eps' ? Math.sqrt(c * c + d * d) : sk;
  }
  return out;
}

/** σε1, σε2 as the table gave them (a source in ε with its own sigma columns), for an ε fit. */
function epsSigmas(table: NkTable, rows: number[], useRe: boolean, useIm: boolean): number[] {
  const parts = [...(useRe ? [table.sigmaEps1!] : []), ...(useIm ? [table.sigmaEps2!] : [])];
  const out: number[] = [];
  for (const column of parts) {
    for (const row of rows) {
      const s = column[row];
      if (!(s > 0))
        throw new InputError(
          'bad-sigma',
          `sigma must be positive to weight a fit, got sigma_eps1=${table.sigmaEps1![row]}, sigma_eps2=${table.sigmaEps2![row]} at ${table.wavelengthNm[row]} nm (row ${row + 1} of the table)`,
        );
      out.push(s);
    }
  }
  return out;
}

/** Whitened model vector (model/σ, residual order) and, on request, its columns ∂(model/σ)/∂p_j for the listed parameters. */
export function whitenedModel(problem: FitProblem, values: ModelValues, columns?: number[]): { model: Float64Array; jacobian: Float64Array[] } {
  const rows = problem.grid.wavelengthNm.length;
  const model = new Float64Array(problem.y.length);
  let at = 0;
  const parts: [Float64Array, Float64Array[] | undefined][] = [];
  if (problem.useRe) parts.push([values.re, values.dRe]);
  if (problem.useIm) parts.push([values.im, values.dIm]);
  const jacobian = (columns ?? []).map(() => new Float64Array(problem.y.length));
  for (const [v, d] of parts) {
    for (let i = 0; i < rows; i++) model[at + i] = v[i] * problem.invSigma[at + i];
    if (columns && d) {
      columns.forEach((p, c) => {
        const src = d[p];
        const dst = jacobian[c];
        for (let i = 0; i < rows; i++) dst[at + i] = src[i] * problem.invSigma[at + i];
      });
    }
    at += rows;
  }
  return { model, jacobian };
}

/**
 * Noise level of a smooth curve sampled densely, from its second differences: for white noise σ,
 * d_i = y_{i−1} − 2y_i + y_{i+1} has standard deviation √6·σ; the median absolute value over 0.6745
 * estimates that robustly (common practice, the idea behind "DER_SNR" noise estimators).
 */
export function noiseFromSecondDifferences(y: ArrayLike<number>): number {
  const d: number[] = [];
  for (let i = 1; i < y.length - 1; i++) d.push(Math.abs(y[i - 1] - 2 * y[i] + y[i + 1]));
  if (d.length === 0) return 0;
  d.sort((a, b) => a - b);
  return d[d.length >> 1] / 0.6745 / Math.sqrt(6);
}

/**
 * Without sigma columns, the imaginary-part residuals are weighted by σ_re/σ_im, both estimated from the
 * data themselves (noiseFromSecondDifferences), so neither quantity dominates just because its noise is
 * larger; χ² stays in units of the real part. The weights depend on the data only, so every model
 * compared on one table sees the same weights. Ratio clamped to [1e-3, 1e3].
 */
function relativeWeights(re: Float64Array, im: Float64Array, useRe: boolean, useIm: boolean): Float64Array {
  const rows = re.length;
  const out = new Float64Array((useRe ? rows : 0) + (useIm ? rows : 0)).fill(1);
  if (!(useRe && useIm)) return out;
  const sRe = noiseFromSecondDifferences(re);
  const sIm = noiseFromSecondDifferences(im);
  const ratio = sIm > 0 ? Math.min(1e3, Math.max(1e-3, sRe / sIm)) : 1e3;
  out.fill(ratio, rows);
  return out;
}
