/**
 * Levenberg-Marquardt on ml-levenberg-marquardt 5.1, wrapped so its traps never reach a user
 * (K. Levenberg 1944; D. W. Marquardt, J. SIAM 11, 431 (1963)). What the wrapper does and why
 * (details in DEVELOPERS.md, "Fitter"):
 * - whitened residuals, library weights left at 1 (its weights are applied inconsistently between
 *   the error sum and the normal equations);
 * - parameters in normalized units x_j = p_j/s_j with s_j = COLUMN_NORM/‖∂r/∂p_j‖, so JᵀJ has a constant
 *   diagonal and the library's absolute damping (clamped to [1e-7, 1e7]) means the same for every model;
 * - the analytic Jacobian through `jacobianFunction` (the default finite-difference step is an absolute 0.1);
 * - runs in short chunks and applies its own convergence tests between them (relative χ² decrease,
 *   projected-gradient cosine, χ² ≤ tolerance), because the library stops only on an ABSOLUTE χ²
 *   tolerance or the iteration cap, and accepts uphill steps (it returns the best point it saw).
 */
import { levenbergMarquardt } from 'ml-levenberg-marquardt';
import { NumericalError } from '../errors.ts';
import type { DispersionModel } from '../models/catalogue.ts';
import { whitenedModel, type FitProblem } from './problem.ts';

export interface LmResult {
  values: Float64Array;
  chi2: number;
  iterations: number;
  converged: boolean;
}

/** Library iterations per chunk between our own convergence tests. */
const CHUNK = 8;
/**
 * Norm every Jacobian column is scaled to. The library clamps its damping to [1e-7, 1e7] in absolute
 * terms; with JᵀJ's diagonal at COLUMN_NORM² = 1e6 that is a relative range of [1e-13, 10], wide enough
 * for both the Gauss-Newton end (ill-conditioned Sellmeier valleys) and heavy damping far from the minimum.
 */
const COLUMN_NORM = 1e3;
/** Relative χ² decrease over a chunk below which the fit has stalled. */
const FTOL = 1e-10;
/** Largest |cos| between the residual vector and a free Jacobian column accepted at a minimum (MINPACK's gtol test). */
const GTOL = 1e-5;

/** Raised inside the library's callbacks when the Jacobian is not finite; ends the chunk. */
class NonFiniteJacobian extends Error {}

/** Whitened residuals r = (y − model)/σ and Jacobian columns of the model for the free parameters. */
export function residualsAt(problem: FitProblem, model: DispersionModel, values: Float64Array, free: number[], withJacobian: boolean): { r: Float64Array; jacobian: Float64Array[] } {
  const v = model.evaluate(problem.grid, values, problem.quantity, withJacobian);
  const { model: m, jacobian } = whitenedModel(problem, v, withJacobian ? free : undefined);
  const r = new Float64Array(m.length);
  for (let i = 0; i < m.length; i++) r[i] = problem.y[i] * problem.invSigma[i] - m[i];
  return { r, jacobian };
}

function sumSquares(r: Float64Array): number {
  let s = 0;
  for (let i = 0; i < r.length; i++) s += r[i] * r[i];
  return s;
}

function dot(a: Float64Array, b: Float64Array): number {
  let s = 0;
  for (let i = 0; i < a.length; i++) s += a[i] * b[i];
  return s;
}

export function nonFiniteMessage(model: DispersionModel, values: Float64Array, where: string): string {
  const list = model.parameters.map((p, i) => `${p.name}=${values[i]}`).join(', ');
  return `the ${model.spec} model is not finite ${where} (${list}); check --init/--fix/--bounds against the parameter meanings in 'nkledger fit --help'`;
}

/**
 * Minimize χ² over the free parameters from `start`, within `bounds` (full parameter order).
 * Throws NumericalError when the model is not finite at the start or the library fails.
 */
export function minimize(problem: FitProblem, model: DispersionModel, start: Float64Array, free: number[], bounds: [number, number][], maxIterations: number): LmResult {
  const p = Float64Array.from(start);
  let { r, jacobian } = residualsAt(problem, model, p, free, true);
  let chi2 = sumSquares(r);
  if (!Number.isFinite(chi2)) throw new NumericalError(nonFiniteMessage(model, p, 'at the start values'));
  const chi2Start = chi2;
  const tolerance = Math.max(1e-28 * chi2, 1e-300);
  const yWhite = Float64Array.from(problem.y, (y, i) => y * problem.invSigma[i]);
  const index = Array.from(yWhite.keys());
  let iterations = 0;
  let damping = 1e-3; // relative to the unit-normalized JᵀJ diagonal
  let lastDecrease = Infinity;
  let stalls = 0;
  let converged = false;
  for (;;) {
    const norms = jacobian.map((col) => Math.sqrt(dot(col, col)));
    const rNorm = Math.sqrt(chi2);
    const cosines = free.map((pi, j) => {
      if (!(norms[j] > 0) || rNorm === 0) return 0;
      const descent = dot(jacobian[j], r); // −∂(χ²/2)/∂p_j
      const [lo, hi] = bounds[pi];
      if ((p[pi] <= lo && descent < 0) || (p[pi] >= hi && descent > 0)) return 0; // blocked by a bound
      return Math.abs(descent) / (norms[j] * rNorm);
    });
    const maxCos = Math.max(0, ...cosines);
    if (chi2 <= tolerance || maxCos <= GTOL * 1e-3 || (lastDecrease <= FTOL && maxCos <= GTOL)) {
      converged = true;
      break;
    }
    if (stalls >= 4) {
      // no decrease over several Gauss-Newton restarts: a minimum if χ² is down at rounding level
      converged = chi2 <= 1e-16 * chi2Start;
      break;
    }
    if (iterations >= maxIterations) break;
    const scale = free.map((pi, j) => (norms[j] > 0 && Number.isFinite(norms[j]) ? COLUMN_NORM / norms[j] : Math.max(Math.abs(p[pi]), 1e-3)));
    const full = (x: ArrayLike<number>): Float64Array => {
      const q = Float64Array.from(p);
      free.forEach((pi, j) => (q[pi] = x[j] * scale[j]));
      return q;
    };
    let cachedX: number[] = [];
    let cachedModel: Float64Array = new Float64Array(0);
    let cachedRows: number[][] | null = null;
    const same = (x: number[]) => x.length === cachedX.length && x.every((v, j) => v === cachedX[j]);
    const refresh = (x: number[], withJacobian: boolean) => {
      if (same(x) && (cachedRows || !withJacobian)) return;
      const v = model.evaluate(problem.grid, full(x), problem.quantity, withJacobian);
      const w = whitenedModel(problem, v, withJacobian ? free : undefined);
      cachedX = x.slice();
      cachedModel = w.model;
      cachedRows = withJacobian ? index.map((i) => w.jacobian.map((col, j) => col[i] * scale[j])) : null;
      // a NaN in JᵀJ surfaces in the library as "Matrix is not symmetric" (NaN ≠ NaN): stop the chunk instead
      if (cachedRows?.some((row) => row.some((v) => !Number.isFinite(v)))) throw new NonFiniteJacobian();
    };
    let result;
    try {
      result = levenbergMarquardt(
        { x: index, y: yWhite },
        (x) => {
          refresh(x, false);
          return (i) => cachedModel[i];
        },
        {
          initialValues: free.map((pi, j) => p[pi] / scale[j]),
          minValues: free.map((pi, j) => bounds[pi][0] / scale[j]),
          maxValues: free.map((pi, j) => bounds[pi][1] / scale[j]),
          damping: damping * COLUMN_NORM * COLUMN_NORM,
          maxIterations: CHUNK,
          errorTolerance: tolerance,
          jacobianFunction: (x) => {
            refresh(x, true);
            return (i) => (cachedRows as number[][])[i];
          },
        },
      );
    } catch (err) {
      if (err instanceof NonFiniteJacobian) {
        damping = Math.min(damping * 100, 10);
        lastDecrease = 0;
        stalls++;
        continue;
      }
      throw new NumericalError(`the Levenberg-Marquardt step failed (${err instanceof Error ? err.message : String(err)}); try --init closer to the data, --fix a parameter or a narrower --range`);
    }
    iterations += result.iterations;
    const next = full(result.parameterValues);
    ({ r, jacobian } = residualsAt(problem, model, next, free, true));
    const nextChi2 = sumSquares(r);
    if (!Number.isFinite(nextChi2) || nextChi2 > chi2) {
      // no better point in this chunk: stay, damp harder
      ({ r, jacobian } = residualsAt(problem, model, p, free, true));
      damping = Math.min(damping * 100, 10);
      lastDecrease = 0;
      stalls++;
      continue;
    }
    lastDecrease = (chi2 - nextChi2) / chi2;
    stalls = lastDecrease <= FTOL ? stalls + 1 : 0;
    // progress: restart near Gauss-Newton; the library raises damping itself within a chunk when steps fail
    damping = 1e-6;
    p.set(next);
    chi2 = nextChi2;
  }
  return { values: p, chi2, iterations, converged };
}
