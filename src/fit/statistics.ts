/**
 * Uncertainty and goodness of fit at the optimum.
 * - Covariance cov = s²(JᵀWJ)⁻¹ with s² = χ²/(N − p) (W. H. Press et al., Numerical Recipes, ch. 15):
 *   J is taken on whitened residuals, so JᵀJ here is JᵀWJ.
 * - AIC = N·ln(χ²/N) + 2p (H. Akaike, IEEE Trans. Autom. Control 19, 716 (1974)) and
 *   BIC = N·ln(χ²/N) + p·ln N (G. Schwarz, Ann. Stat. 6, 461 (1978)): the Gaussian
 *   log-likelihood with the (weighted) residual variance estimated from the fit, constants dropped;
 *   only differences between models fitted to the same points mean anything.
 */
import { EigenvalueDecomposition, Matrix, inverse } from 'ml-matrix';
import { InputError, NumericalError } from '../errors.ts';
import { maxOf, minOf } from '../optics/extremes.ts';

/** |r| above which a pair of parameters is flagged as highly correlated. */
export const CORRELATION_THRESHOLD = 0.95;

/**
 * JᵀWJ is singular at the optimum: `kind` 'dead' when the model does not depend on `parameters` there,
 * 'degenerate' when they move together (the smallest eigenvector). fit.ts words it with the context
 * (bounds reached, vanished terms, values), which this function does not know.
 */
export class SingularCovariance {
  constructor(
    readonly kind: 'dead' | 'degenerate',
    readonly parameters: string[],
  ) {}
}

export interface Uncertainty {
  stderr: number[];
  correlation: number[][];
}

/**
 * Standard errors and correlation matrix of the free parameters from the whitened Jacobian columns.
 * Throws NumericalError naming the undetermined parameters when JᵀWJ is singular.
 */
export function uncertainty(jacobian: Float64Array[], names: string[], chi2: number, points: number): Uncertainty {
  const count = jacobian.length;
  if (count === 0) return { stderr: [], correlation: [] };
  const dof = points - count;
  if (dof <= 0) throw new InputError('too-few-points', `${points} residuals cannot determine ${count} free parameters`);
  const alpha = new Matrix(count, count);
  for (let a = 0; a < count; a++) {
    for (let b = a; b < count; b++) {
      let s = 0;
      const ca = jacobian[a];
      const cb = jacobian[b];
      for (let i = 0; i < ca.length; i++) s += ca[i] * cb[i];
      alpha.set(a, b, s);
      alpha.set(b, a, s);
    }
  }
  const d = Array.from({ length: count }, (_, a) => Math.sqrt(alpha.get(a, a)));
  const dead = names.filter((_, a) => !(d[a] > 0) || !Number.isFinite(d[a]));
  if (dead.length > 0) throw new SingularCovariance('dead', dead);
  // unit-diagonal form, so the condition test is scale free
  const scaled = new Matrix(count, count);
  for (let a = 0; a < count; a++) for (let b = 0; b < count; b++) scaled.set(a, b, alpha.get(a, b) / (d[a] * d[b]));
  const eig = new EigenvalueDecomposition(scaled, { assumeSymmetric: true });
  const values = eig.realEigenvalues;
  const smallest = values.indexOf(minOf(values));
  if (!(values[smallest] > 1e-13 * maxOf(values))) {
    const v = eig.eigenvectorMatrix.getColumn(smallest);
    const involved = names.filter((_, a) => Math.abs(v[a]) > 0.3);
    throw new SingularCovariance('degenerate', involved);
  }
  const inv = inverse(scaled);
  const s2 = chi2 / dof;
  const stderr = d.map((da, a) => Math.sqrt((s2 * inv.get(a, a)) / (da * da)));
  const correlation = Array.from({ length: count }, (_, a) =>
    Array.from({ length: count }, (_, b) => inv.get(a, b) / Math.sqrt(inv.get(a, a) * inv.get(b, b))),
  );
  if (stderr.some((s) => !Number.isFinite(s)))
    throw new NumericalError('the covariance matrix is not finite at the optimum; the fit is not trustworthy');
  return { stderr, correlation };
}

export function informationCriteria(chi2: number, points: number, freeCount: number): { aic: number; bic: number } {
  const logLikelihoodTerm = points * Math.log(Math.max(chi2, 1e-300) / points);
  return { aic: logLikelihoodTerm + 2 * freeCount, bic: logLikelihoodTerm + freeCount * Math.log(points) };
}

export function rms(values: ArrayLike<number>): number {
  let s = 0;
  for (let i = 0; i < values.length; i++) s += values[i] * values[i];
  return Math.sqrt(s / values.length);
}
