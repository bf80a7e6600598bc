/**
 * Levenberg-Marquardt on ml-levenberg-marquardt 5.1, wrapped so its traps never reach a user
 * (K. Levenberg 1944; D. W. Marquardt, J. SIAM 11, 431 (1963)). What the wrapper does and why
 * (details in DEVELOPERS.md, "Fitter"):
 * - whitened residuals, library weights left at 1 (its weights are applied inconsistently between
 *   the error sum and the normal equations);
 * - parameters in normalized units x_j = p_j/s_j with s_j = COLUMN_NORM/‖∂r/∂p_j‖, so JᵀJ has a constant
 *   diagonal and the library's absolute damping (clamped to [1e-7, 1e7]) means the same for every model;
 * - the analytic Jacobian through `jacobianFunction` (the default finite-difference step is an absolute 0.1);
 * - its own convergence tests (relative χ² decrease confirmed by the projected-gradient cosine,
 *   MINPACK-style), applied inside the library's callbacks, which end the run by throwing a StopChunk;
 *   the library alone stops only on an ABSOLUTE χ² tolerance or the iteration cap, and accepts uphill
 *   steps (it returns the best point it saw). Stalled chunks restart from the best point, rescaled,
 *   with heavier damping.
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
const CHUNK = 30;
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

/** Raised inside the library's callbacks to end a chunk early: our convergence tests fired or progress stalled. */
class StopChunk extends Error {
  constructor(readonly reason: 'converged' | 'stalled') {
    super(reason);
  }
}

/** Largest |cos| between the residual vector and a free Jacobian column, ignoring columns blocked by a bound. */
function gradientCosine(r: Float64Array, jacobian: Float64Array[], p: Float64Array, free: number[], bounds: [number, number][]): number {
  const rNorm = Math.sqrt(dot(r, r));
  let worst = 0;
  free.forEach((pi, j) => {
    const norm = Math.sqrt(dot(jacobian[j], jacobian[j]));
    if (!(norm > 0) || rNorm === 0) return;
    const descent = dot(jacobian[j], r); // −∂(χ²/2)/∂p_j
    const [lo, hi] = bounds[pi];
    if ((p[pi] <= lo && descent < 0) || (p[pi] >= hi && descent > 0)) return;
    worst = Math.max(worst, Math.abs(descent) / (norm * rNorm));
  });
  return worst;
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
  const rowCount = yWhite.length;
  let iterations = 0;
  let damping = 1e-5; // relative to the normalized JᵀJ diagonal
  let stalls = 0;
  let converged = chi2 <= tolerance || gradientCosine(r, jacobian, p, free, bounds) <= GTOL;
  while (!converged && iterations < maxIterations && stalls < 4) {
    const norms = jacobian.map((col) => Math.sqrt(dot(col, col)));
    const scale = free.map((pi, j) => (norms[j] > 0 && Number.isFinite(norms[j]) ? COLUMN_NORM / norms[j] : Math.max(Math.abs(p[pi]), 1e-3)));
    const full = (x: ArrayLike<number>): Float64Array => {
      const q = Float64Array.from(p);
      for (let j = 0; j < free.length; j++) q[free[j]] = x[j] * scale[j];
      return q;
    };
    // the best point of this chunk, and the model/Jacobian cache keyed by the library's parameter array
    let bestX = free.map((pi, j) => p[pi] / scale[j]);
    let bestChi2 = chi2;
    let failures = 0;
    let checkGradientAt: number[] | null = null;
    // the cache starts filled with the start point, so the library's first calls cost nothing
    let cachedX: number[] = bestX.slice();
    let cachedModel: Float64Array = Float64Array.from(yWhite, (y, i) => y - r[i]);
    let haveJacobian = true;
    let cachedColumns: Float64Array[] = jacobian;
    // the library copies each row out before asking for the next, so one buffer serves every row
    const rowBuffer = new Array<number>(free.length).fill(0);
    const same = (x: number[]) => x.every((v, j) => v === cachedX[j]);
    const values = (x: number[]) => {
      if (cachedModel.length > 0 && same(x)) return;
      cachedModel = whitenedModel(problem, model.evaluate(problem.grid, full(x), problem.quantity, false)).model;
      cachedX = x.slice();
      haveJacobian = false;
      let c = 0;
      for (let i = 0; i < rowCount; i++) c += (yWhite[i] - cachedModel[i]) ** 2;
      iterations++;
      if (c < bestChi2) {
        const decrease = (bestChi2 - c) / bestChi2;
        bestChi2 = c;
        bestX = x.slice();
        failures = 0;
        if (decrease <= FTOL) checkGradientAt = bestX; // confirm with the gradient at the next Jacobian
      } else if (!(c < bestChi2) && ++failures >= 8) throw new StopChunk('stalled');
    };
    const jacobianRows = (x: number[]) => {
      if (!(same(x) && haveJacobian)) {
        const v = model.evaluate(problem.grid, full(x), problem.quantity, true);
        const w = whitenedModel(problem, v, free);
        // a NaN in JᵀJ surfaces in the library as "Matrix is not symmetric" (NaN ≠ NaN): end the chunk instead
        for (const col of w.jacobian) for (let i = 0; i < rowCount; i++) if (!Number.isFinite(col[i])) throw new StopChunk('stalled');
        if (x === bestX || (bestX.every((v, j) => v === x[j]) && bestChi2 < chi2Start)) {
          const rr = Float64Array.from(yWhite, (y, i) => y - w.model[i]);
          const cos = gradientCosine(rr, w.jacobian, full(x), free, bounds);
          if (cos <= GTOL || (checkGradientAt !== null && cos <= 1e-3)) throw new StopChunk('converged');
        }
        checkGradientAt = null;
        cachedColumns = w.jacobian;
        haveJacobian = true;
        cachedX = x.slice();
        cachedModel = w.model;
      }
      const columns = cachedColumns;
      return (i: number) => {
        for (let j = 0; j < columns.length; j++) rowBuffer[j] = columns[j][i] * scale[j];
        return rowBuffer;
      };
    };
    let reason: 'converged' | 'stalled' | 'ended' = 'ended';
    try {
      const result = levenbergMarquardt(
        { x: index, y: yWhite },
        (x) => {
          values(x);
          const m = cachedModel;
          return (i) => m[i];
        },
        {
          initialValues: bestX,
          minValues: free.map((pi, j) => bounds[pi][0] / scale[j]),
          maxValues: free.map((pi, j) => bounds[pi][1] / scale[j]),
          damping: damping * COLUMN_NORM * COLUMN_NORM,
          maxIterations: Math.max(1, Math.min(CHUNK, maxIterations - iterations)),
          errorTolerance: tolerance,
          jacobianFunction: (x) => jacobianRows(x),
        },
      );
      if (result.parameterError < bestChi2) {
        bestChi2 = result.parameterError;
        bestX = result.parameterValues;
      }
    } catch (err) {
      if (!(err instanceof StopChunk)) {
        throw new NumericalError(`the Levenberg-Marquardt step failed (${err instanceof Error ? err.message : String(err)}); try --init closer to the data, --fix a parameter or a narrower --range`);
      }
      reason = err.reason;
    }
    const improved = bestChi2 < chi2;
    if (improved) {
      p.set(full(bestX));
      chi2 = bestChi2;
    }
    ({ r, jacobian } = residualsAt(problem, model, p, free, true));
    if (reason === 'converged' || chi2 <= tolerance) converged = true;
    else if (improved && gradientCosine(r, jacobian, p, free, bounds) <= GTOL) converged = true;
    else if (improved && reason === 'ended') {
      stalls = 0;
      damping = 1e-6; // progress: restart near Gauss-Newton with fresh scaling
    } else {
      stalls++;
      damping = Math.min(damping * 100, 10);
    }
  }
  // no decrease over several restarts with χ² down at rounding level (noise-free data): that is the minimum
  if (!converged && stalls >= 4 && chi2 <= 1e-16 * chi2Start) converged = true;
  return { values: p, chi2, iterations, converged };
}
