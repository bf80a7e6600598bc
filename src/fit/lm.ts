/**
 * Levenberg-Marquardt on ml-levenberg-marquardt 5.1, wrapped so its traps never reach a user
 * (K. Levenberg 1944; D. W. Marquardt, J. SIAM 11, 431 (1963)). What the wrapper does and why
 * (details in DEVELOPERS.md, "Fitter"):
 * - whitened residuals, library weights left at 1 (its weights are applied inconsistently between
 *   the error sum and the normal equations);
 * - parameters in normalized units x_j = p_j/s_j with s_j = COLUMN_NORM/‖∂r/∂p_j‖, so JᵀJ has a constant
 *   diagonal and the library's absolute damping (clamped to [1e-7, 1e7]) means the same for every model;
 * - the analytic Jacobian through `jacobianFunction` (the default finite-difference step is an absolute 0.1);
 * - its own convergence tests (the cosine between the residuals and the span of the Jacobian columns,
 *   i.e. the χ² a Gauss-Newton step could still gain, MINPACK-style), applied inside the library's
 *   callbacks as soon as a trial lowers χ², which end the run by throwing a StopChunk; the library alone
 *   stops only on an ABSOLUTE χ² tolerance or the iteration cap, and accepts uphill steps (it returns the
 *   best point it saw). Stalled chunks restart from the best point, rescaled, with heavier damping;
 * - one model pass (values and Jacobian) per trial point, remembered, so the library's per-point
 *   callbacks are array lookups and the report reuses the Jacobian at the optimum;
 * - the library is handed the least-squares problem in its QR-reduced form (reduce()): p + 1 rows with the
 *   same JᵀJ, Jᵀr and ‖r‖² as the N whitened rows, so its per-element ml-matrix work costs O(p²) instead of
 *   O(N·p) while every step, damping decision and best point stays what it would be on the full rows.
 */
import { levenbergMarquardt } from 'ml-levenberg-marquardt';
import { NumericalError, optionRef } from '../errors.ts';
import type { DispersionModel } from '../models/catalogue.ts';
import { whitenedModel, type FitProblem } from './problem.ts';

export interface LmResult {
  values: Float64Array;
  chi2: number;
  iterations: number;
  converged: boolean;
  /** Whitened Jacobian columns of the free parameters at `values` (for the covariance). */
  jacobian: Float64Array[];
  /** Whitened residuals at `values`. */
  r: Float64Array;
  /** The parameters that were free in the end (minimizeWithBounds leaves out those held at a bound). */
  free: number[];
  /** Parameters held at a bound at the optimum (the gradient pushes them outward), full parameter order. */
  atBound: number[];
}

/** A point the model was evaluated at, in the library's scaled units `x` and in full parameter order `q`. */
interface Point {
  x: number[];
  q: Float64Array;
  r: Float64Array;
  jacobian: Float64Array[];
  chi2: number;
  /** The QR-reduced problem at this point (reduce()): what the library sees. */
  reduced: Reduced;
}

/**
 * The least-squares problem at one point in QR-reduced form. With the Householder factorization
 * J = Q·[R; 0] of the N×p whitened Jacobian and c = Qᵀr, the p + 1 rows (R, c₁…c_p) and (0, ‖c_{p+1…N}‖)
 * have exactly the JᵀJ = RᵀR, Jᵀr = Rᵀc₁…p and ‖r‖² of the N rows (Q is orthogonal; G. H. Golub and
 * C. F. Van Loan, Matrix Computations, §5.3). Levenberg-Marquardt only ever uses those three
 * quantities, so the library takes the same steps on these rows as on the full ones.
 */
interface Reduced {
  /** Rows of R (p×p, upper triangular), unscaled parameter units. */
  rows: Float64Array[];
  /** The library's model values for its data y = 0: −c₁…−c_p, −‖c_{p+1…N}‖ (residual = y − model = c). */
  model: Float64Array;
  /** ‖c₁…c_p‖ / ‖r‖: the cosine between r and the span of all Jacobian columns (NaN when rank-deficient). */
  spanCosine: number;
}

/** Library iterations per chunk between our own convergence tests. */
const CHUNK = 30;
/**
 * Norm every Jacobian column is scaled to. The library clamps its damping to [1e-7, 1e7] in absolute
 * terms; with JᵀJ's diagonal at COLUMN_NORM² = 1e6 that is a relative range of [1e-13, 10], wide enough
 * for both the Gauss-Newton end (ill-conditioned Sellmeier valleys) and heavy damping far from the minimum.
 */
const COLUMN_NORM = 1e3;
/**
 * Initial damping relative to the normalized JᵀJ diagonal: nearly Gauss-Newton. Measured on the benchmark
 * and the demo fits (model evaluations, all seven demos + three benchmark cases): 1e-5 → 117, 1e-7 → 89,
 * 1e-9 → 61, 1e-13 (the library's floor) → 60; the library raises it by DAMPING_UP after a poor step.
 */
const INITIAL_DAMPING = 1e-9;
/** The library's damping factors after a poor / a good step (its defaults; 5/5 and 3/2 measured no better). */
const DAMPING_UP = 11;
const DAMPING_DOWN = 9;
/** Steps in a row without a new best point after which a chunk has stalled. */
const MAX_FAILURES = 8;
/** Relative χ² decrease of one step below which the gradient test is relaxed to LOOSE_GTOL. */
const FTOL = 1e-10;
const LOOSE_GTOL = 1e-3;
/** Largest cosine between the residual vector and the span of the free Jacobian columns accepted at a minimum (projectedCosine). */
const GTOL = 1e-5;

/** Whitened residuals r = (y − model)/σ and Jacobian columns of the model for the free parameters. */
export function residualsAt(
  problem: FitProblem,
  model: DispersionModel,
  values: Float64Array,
  free: number[],
  withJacobian: boolean,
): { r: Float64Array; jacobian: Float64Array[] } {
  const v = model.evaluate(problem.grid, values, problem.quantity, withJacobian && { columns: free, re: problem.useRe, im: problem.useIm });
  const { model: m, jacobian } = whitenedModel(problem, v, withJacobian ? free : undefined);
  const r = new Float64Array(m.length);
  for (let i = 0; i < m.length; i++) r[i] = problem.y[i] * problem.invSigma[i] - m[i];
  return { r, jacobian };
}

/**
 * Whitened residuals r = (y − model)/σ and the Jacobian columns ∂(model/σ)/∂p of the `free` parameters at `q`
 * (full parameter order): what minimize needs of any least-squares problem. Non-finite values mark a point
 * the minimizer must not move to.
 */
export type ResidualFunction = (q: Float64Array, free: number[], withJacobian: boolean) => { r: Float64Array; jacobian: Float64Array[] };

/** The residual function of a dispersion-model fit to a table. */
export function tableResiduals(problem: FitProblem, model: DispersionModel): ResidualFunction {
  return (q, free, withJacobian) => residualsAt(problem, model, q, free, withJacobian);
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

/**
 * Householder QR of the Jacobian columns applied to r (see Reduced); the inputs are not modified.
 * `work` is scratch space of at least (columns + 1)·rows numbers, reused between calls.
 */
function reduce(jacobian: Float64Array[], r: Float64Array, work: Float64Array): Reduced {
  const cols = jacobian.length;
  const rows = r.length;
  // column-major copy [J | r] in one flat buffer: column j at j·rows
  const a = work;
  for (let j = 0; j < cols; j++) a.set(jacobian[j], j * rows);
  a.set(r, cols * rows);
  const rFactor: Float64Array[] = [];
  for (let k = 0; k < cols; k++) rFactor.push(new Float64Array(cols));
  let fullRank = cols < rows;
  for (let k = 0; k < cols && k < rows; k++) {
    const base = k * rows;
    let norm2 = 0;
    for (let i = k; i < rows; i++) norm2 += a[base + i] * a[base + i];
    const column2 = dot(jacobian[k], jacobian[k]);
    if (!(norm2 > 1e-24 * column2)) fullRank = false; // numerically in the span of the earlier columns
    if (!(norm2 > 0)) continue;
    const norm = Math.sqrt(norm2);
    const xk = a[base + k];
    const alpha = xk >= 0 ? -norm : norm;
    a[base + k] = xk - alpha; // v = x − α·e_k, the Householder vector, with vᵀv = 2(‖x‖² − α·x_k)
    const twoOverVv = 1 / (norm2 - alpha * xk);
    for (let j = k + 1; j <= cols; j++) {
      const other = j * rows;
      let sum = 0;
      for (let i = k; i < rows; i++) sum += a[base + i] * a[other + i];
      const f = sum * twoOverVv;
      for (let i = k; i < rows; i++) a[other + i] -= f * a[base + i];
      if (j < cols) rFactor[k][j] = a[other + k];
    }
    rFactor[k][k] = alpha;
  }
  const c = cols * rows;
  const model = new Float64Array(cols + 1);
  let inSpan2 = 0;
  for (let k = 0; k < cols && k < rows; k++) {
    model[k] = -a[c + k];
    inSpan2 += a[c + k] * a[c + k];
  }
  let rest2 = 0;
  for (let i = cols; i < rows; i++) rest2 += a[c + i] * a[c + i];
  model[cols] = -Math.sqrt(rest2);
  const total2 = inSpan2 + rest2;
  return { rows: rFactor, model, spanCosine: fullRank && total2 > 0 ? Math.sqrt(inSpan2 / total2) : NaN };
}

export function nonFiniteMessage(model: DispersionModel, values: Float64Array, where: string): string {
  const list = model.parameters.map((p, i) => `${p.name}=${values[i]}`).join(', ');
  return `the ${model.spec} model is not finite ${where} (${list}); check ${optionRef('init')}, ${optionRef('fix')} and ${optionRef('bounds')} against the meanings of its parameters`;
}

/**
 * Thrown inside the library's callbacks to end a chunk early: our convergence tests fired or progress
 * stalled. Caught in minimize() only, so it is not an Error: no stack trace is captured on every stop.
 */
class StopChunk {
  constructor(readonly reason: 'converged' | 'stalled') {}
}

/**
 * |cos| of the angle between the residual vector and the span of the free Jacobian columns (those not
 * blocked by a bound): ‖P·r‖/‖r‖ with P the orthogonal projector on that span, from modified Gram-Schmidt
 * with one re-orthogonalization. Its square is the relative χ² decrease a full Gauss-Newton step
 * predicts, so it is MINPACK's "predicted reduction" test (J. J. Moré, B. S. Garbow, K. E. Hillstrom,
 * ANL-80-74 (1980)) in a form that does not depend on the damping. Unlike the largest cosine with a single
 * column, it sees the χ² still to be gained along a narrow valley of nearly collinear columns.
 */
function projectedCosine(
  r: Float64Array,
  jacobian: Float64Array[],
  p: Float64Array,
  free: number[],
  bounds: [number, number][],
  spanCosine = NaN,
): number {
  const rNorm2 = dot(r, r);
  if (!(rNorm2 > 0)) return 0;
  const rows = r.length;
  // the columns that may move, and the largest cosine with a single one of them: a lower bound of the
  // cosine with their span, and all the tests need when it is already above LOOSE_GTOL (far from a minimum)
  const active: { col: Float64Array; norm: number }[] = [];
  let single = 0;
  for (let j = 0; j < free.length; j++) {
    const col = jacobian[j];
    const norm = Math.sqrt(dot(col, col));
    if (!(norm > 0)) continue;
    const descent = dot(col, r); // −∂(χ²/2)/∂p_j
    const [lo, hi] = bounds[free[j]];
    const value = p[free[j]];
    if ((value <= lo && descent < 0) || (value >= hi && descent > 0)) continue;
    active.push({ col, norm });
    single = Math.max(single, Math.abs(descent) / (norm * Math.sqrt(rNorm2)));
  }
  if (single > LOOSE_GTOL) return single;
  // no column blocked by a bound and full rank: the QR reduction already holds the answer
  if (active.length === free.length && Number.isFinite(spanCosine)) return spanCosine;
  const basis: Float64Array[] = [];
  let projected2 = 0;
  for (const { col, norm } of active) {
    const v = new Float64Array(rows);
    for (let i = 0; i < rows; i++) v[i] = col[i] / norm;
    for (let pass = 0; pass < 2; pass++) {
      for (let b = 0; b < basis.length; b++) {
        const q = basis[b];
        const c = dot(q, v);
        for (let i = 0; i < rows; i++) v[i] -= c * q[i];
      }
    }
    const left = Math.sqrt(dot(v, v));
    if (!(left > 1e-12)) continue; // numerically in the span already
    for (let i = 0; i < rows; i++) v[i] /= left;
    basis.push(v);
    projected2 += dot(v, r) ** 2;
  }
  return Math.sqrt(projected2 / rNorm2);
}

/**
 * Minimize χ² over the free parameters from `start`, within `bounds` (full parameter order), for any residual
 * function (a table fit, the ellipsometric Ψ/Δ fit). `nonFinite` words the refusal when the residuals are not
 * finite at the start. Throws NumericalError then or when the library fails.
 */
export function minimize(
  residuals: ResidualFunction,
  start: Float64Array,
  free: number[],
  bounds: [number, number][],
  maxIterations: number,
  nonFinite: (p: Float64Array) => string,
): LmResult {
  const p = Float64Array.from(start);
  let { r, jacobian } = residuals(p, free, true);
  let chi2 = sumSquares(r);
  if (!Number.isFinite(chi2)) throw new NumericalError(nonFinite(p), 'model-not-finite');
  const chi2Start = chi2;
  const tolerance = Math.max(1e-28 * chi2, 1e-300);
  // the library's data: the p + 1 rows of the QR-reduced problem (reduce()), y = 0 so its residual is c
  const reducedIndex = Array.from({ length: free.length + 1 }, (_, i) => i);
  const reducedY = new Array<number>(free.length + 1).fill(0);
  let iterations = 0;
  let damping = INITIAL_DAMPING; // relative to the normalized JᵀJ diagonal
  let stalls = 0;
  const work = new Float64Array((free.length + 1) * r.length);
  let reduced = reduce(jacobian, r, work);
  let converged = chi2 <= tolerance || projectedCosine(r, jacobian, p, free, bounds, reduced.spanCosine) <= GTOL;
  while (!converged && iterations < maxIterations && stalls < 4) {
    const norms = jacobian.map((col) => Math.sqrt(dot(col, col)));
    const scale = free.map((pi, j) => (norms[j] > 0 && Number.isFinite(norms[j]) ? COLUMN_NORM / norms[j] : Math.max(Math.abs(p[pi]), 1e-3)));
    const full = (x: ArrayLike<number>): Float64Array => {
      const q = Float64Array.from(p);
      for (let j = 0; j < free.length; j++) q[free[j]] = x[j] * scale[j];
      return q;
    };
    /** Model, residuals and Jacobian at a library point, in one model pass; χ² is NaN when anything is not finite. */
    const evaluateAt = (x: number[]): Point => {
      const q = full(x);
      const w = residuals(q, free, true);
      const rr = w.r;
      let c = sumSquares(rr);
      // a NaN in JᵀJ surfaces in the library as "Matrix is not symmetric" (NaN ≠ NaN): never move there
      for (const col of w.jacobian) if (!Number.isFinite(sumSquares(col))) c = NaN;
      return { x: x.slice(), q, r: rr, jacobian: w.jacobian, chi2: c, reduced: reduce(w.jacobian, rr, work) };
    };
    // the start of the chunk: residuals and Jacobian already known, so the library's first calls cost nothing
    let best: Point = { x: free.map((pi, j) => p[pi] / scale[j]), q: Float64Array.from(p), r, jacobian, chi2, reduced };
    let current = best; // the point the library stands on
    let failures = 0;
    const at = (x: number[], point: Point) => x.every((v, j) => v === point.x[j]);
    /**
     * The library's model callback. A new point is a trial step, evaluated with its Jacobian in one model
     * pass (the library steps on from it, so the Jacobian is needed next). The library accepts every step,
     * also uphill, and that is left alone: vetoing uphill steps (below) measured 5× more evaluations on
     * the demo fits (a strict veto 630 against 117; vetoing only steps that raise χ² tenfold 111 against
     * 63), because the library's fixed ×11/÷9 damping schedule then crawls along narrow valleys.
     * Only a step to a non-finite model or Jacobian is VETOED, since the library cannot continue from
     * there: it passes its own parameter array (ml-levenberg-marquardt 5.1, levenberg_marquardt.ts), which
     * is reset to the best point, so the library sees no change, raises its damping and solves again.
     */
    const values = (x: number[]): Float64Array => {
      if (at(x, current)) return current.reduced.model;
      iterations++;
      const trial = evaluateAt(x);
      if (!Number.isFinite(trial.chi2)) {
        for (let j = 0; j < x.length; j++) x[j] = best.x[j];
        current = best;
      } else current = trial;
      if (trial.chi2 < best.chi2) {
        const decrease = (best.chi2 - trial.chi2) / best.chi2;
        best = trial;
        failures = 0;
        const cos = projectedCosine(trial.r, trial.jacobian, trial.q, free, bounds, trial.reduced.spanCosine);
        if (cos <= GTOL || (decrease <= FTOL && cos <= LOOSE_GTOL) || trial.chi2 <= tolerance) throw new StopChunk('converged');
      } else if (++failures >= MAX_FAILURES) throw new StopChunk('stalled');
      return current.reduced.model;
    };
    // the library copies each row out before asking for the next, so one buffer serves every row
    const rowBuffer = new Array<number>(free.length).fill(0);
    const jacobianRows = (x: number[]) => {
      if (!at(x, current)) current = evaluateAt(x); // not reached with 5.1, which asks at the point it stands on
      if (!Number.isFinite(current.chi2)) throw new StopChunk('stalled');
      // R of the scaled columns J·diag(scale) is R·diag(scale)
      const rowsOfR = current.reduced.rows;
      return (i: number) => {
        const row = rowsOfR[i];
        if (row === undefined)
          rowBuffer.fill(0); // the last reduced row: ‖c_{p+1…N}‖ with a zero Jacobian row
        else for (let j = 0; j < row.length; j++) rowBuffer[j] = row[j] * scale[j];
        return rowBuffer;
      };
    };
    let reason: 'converged' | 'stalled' | 'ended' = 'ended';
    try {
      levenbergMarquardt(
        { x: reducedIndex, y: reducedY },
        (x) => {
          const m = values(x);
          return (i) => m[i];
        },
        {
          initialValues: best.x,
          minValues: free.map((pi, j) => bounds[pi][0] / scale[j]),
          maxValues: free.map((pi, j) => bounds[pi][1] / scale[j]),
          damping: damping * COLUMN_NORM * COLUMN_NORM,
          dampingStepUp: DAMPING_UP,
          dampingStepDown: DAMPING_DOWN,
          maxIterations: Math.max(1, Math.min(CHUNK, maxIterations - iterations)),
          errorTolerance: tolerance,
          jacobianFunction: (x) => jacobianRows(x),
        },
      );
    } catch (err) {
      if (!(err instanceof StopChunk)) {
        throw new NumericalError(
          `the Levenberg-Marquardt step failed (${err instanceof Error ? err.message : String(err)}); give start values closer to the data or fix a parameter at a known value`,
        );
      }
      reason = err.reason;
    }
    const improved = best.chi2 < chi2;
    if (improved) {
      p.set(best.q);
      chi2 = best.chi2;
      ({ r, jacobian, reduced } = best);
    }
    if (reason === 'converged' || chi2 <= tolerance) converged = true;
    else if (improved && reason === 'ended') {
      stalls = 0;
      damping = INITIAL_DAMPING / 10; // progress: restart nearer Gauss-Newton with fresh scaling
    } else {
      stalls++;
      damping = Math.min(damping * 1000, 10);
    }
  }
  // no decrease over several restarts with χ² down at rounding level (noise-free data): that is the minimum
  if (!converged && stalls >= 4 && chi2 <= 1e-16 * chi2Start) converged = true;
  return { values: p, chi2, iterations, converged, jacobian, r, free, atBound: [] };
}

/**
 * Minimize with simple bounds by an active set around minimize() (the bound-constrained least-squares
 * strategy of Lawson–Hanson / Stark–Parker BVLS, P. B. Stark and R. L. Parker, Comput. Stat. 10, 129
 * (1995)). The library only clamps each step to the box, which leaves the other parameters'
 * step computed as if the clamped one could still move: the fit then stalls 1–30 % above the bounded
 * optimum. Here a parameter that ends on a bound with the gradient pushing it outward is held exactly
 * there and the rest are minimized again; a held parameter whose gradient turns inward is released
 * (one per round, the one pulled hardest). Ends when no parameter changes side, which is the
 * Karush-Kuhn-Tucker condition for the box.
 */
export function minimizeWithBounds(
  residuals: ResidualFunction,
  start: Float64Array,
  free: number[],
  bounds: [number, number][],
  maxIterations: number,
  nonFinite: (p: Float64Array) => string,
): LmResult {
  const held = new Set<number>();
  let p: Float64Array = Float64Array.from(start);
  let iterations = 0;
  let result: LmResult | undefined;
  for (let round = 0; round < 3 * free.length + 3; round++) {
    const movable = free.filter((i) => !held.has(i));
    result = minimize(residuals, p, movable, bounds, Math.max(1, maxIterations - iterations), nonFinite);
    iterations += result.iterations;
    p = result.values;
    // residuals and Jacobian at p: minimize's own when it had every free parameter (the first round, or none held)
    const { r, jacobian } = movable.length === free.length ? result : residuals(p, free, true);
    let changed = false;
    let release = -1;
    let pull = 0;
    free.forEach((i, j) => {
      const [lo, hi] = bounds[i];
      const slack = 1e-9 * (hi - lo);
      // Jᵀr per parameter: positive when raising p_i lowers χ²
      const descent = dot(jacobian[j], r) / Math.sqrt(dot(jacobian[j], jacobian[j]) || 1);
      if (!held.has(i)) {
        if ((p[i] <= lo + slack && descent < 0) || (p[i] >= hi - slack && descent > 0)) {
          p[i] = p[i] <= lo + slack ? lo : hi;
          held.add(i);
          changed = true;
        }
      } else {
        const inward = p[i] <= lo ? descent : -descent;
        if (inward > pull) {
          pull = inward;
          release = i;
        }
      }
    });
    if (!changed && release >= 0) {
      held.delete(release);
      changed = true;
    }
    if (!changed || iterations >= maxIterations) break;
  }
  const final = result as LmResult;
  if (held.size === 0) return { ...final, iterations };
  const movable = free.filter((i) => !held.has(i));
  // the Jacobian of the parameters left free, at the final point (the last minimize may predate the last hold)
  const { r, jacobian } = residuals(p, movable, true);
  return {
    values: p,
    chi2: sumSquares(r),
    iterations,
    converged: final.converged,
    jacobian,
    r,
    free: movable,
    atBound: free.filter((i) => held.has(i)),
  };
}
