/**
 * The least-squares problem: which rows and quantities are fitted, with which weights.
 * Residuals are whitened, rᵢ = (yᵢ − modelᵢ)/σᵢ, so χ² = Σ rᵢ² and the fitter never needs the
 * library's weights option (see DEVELOPERS.md, "Fitter").
 */
import { InputError } from '../errors.ts';
import type { DispersionModel, ModelQuantity, ModelValues } from '../models/catalogue.ts';
import { guessData } from '../models/grid.ts';
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
  warnings: string[];
}

export function buildProblem(table: NkTable, target: FitTarget, rangeNm?: [number, number]): FitProblem {
  const [lo, hi] = rangeNm ?? [-Infinity, Infinity];
  const rows: number[] = [];
  for (let i = 0; i < table.wavelengthNm.length; i++) if (table.wavelengthNm[i] >= lo && table.wavelengthNm[i] <= hi) rows.push(i);
  if (rows.length < 3) {
    throw new InputError('range-too-narrow', `--range ${lo}:${hi} nm keeps ${rows.length} rows of the table (${table.wavelengthNm[0]}–${table.wavelengthNm[table.wavelengthNm.length - 1]} nm); at least 3 are needed`);
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
  const useRe = target !== 'k';
  const useIm = target !== 'n';
  const warnings: string[] = [];
  const sigma = sigmas(table, rows, quantity, n, k, useRe, useIm, warnings);
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
  } else invSigma = relativeWeights(re, im, useRe, useIm);
  // the guess data carry the grid already (GuessData extends SpectralGrid)
  const grid: SpectralGrid = { wavelengthNm: data.wavelengthNm, wavelengthUm: data.wavelengthUm, energyEv: data.energyEv };
  return { grid, data, quantity, useRe, useIm, y, invSigma, weighted: sigma !== undefined, warnings };
}

/**
 * σ per residual from the table's sigma columns (ε: σε1 = √((2nσn)² + (2kσk)²), σε2 = √((2kσn)² + (2nσk)²),
 * first-order propagation through ε = N², common practice); undefined when a needed column is missing.
 */
function sigmas(table: NkTable, rows: number[], quantity: ModelQuantity, n: number[], k: number[], useRe: boolean, useIm: boolean, warnings: string[]): number[] | undefined {
  const needN = quantity === 'eps' || useRe;
  const needK = quantity === 'eps' || useIm;
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
      throw new InputError('bad-sigma', `sigma must be positive to weight a fit, got sigma_n=${sn}, sigma_k=${sk} at ${table.wavelengthNm[row]} nm (row ${row + 1} of the table)`);
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
