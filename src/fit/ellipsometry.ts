/**
 * Weighted least squares on measured ellipsometric Ψ and Δ. The physics (a stack model giving Ψ, Δ at every
 * measured point for a parameter vector) comes in as a function, so this file knows nothing of stacks or
 * files: pure. Residuals r = (Ψ_meas − Ψ_model)/σΨ and wrap(Δ_meas − Δ_model)/σΔ, the Δ difference taken
 * as the shortest angle in (−180°, 180°] (Δ is a phase). Minimized with the project's Levenberg-Marquardt
 * wrapper (lm.ts) in its bounded form, from each of several start vectors (multi-start); the best χ² wins.
 * The Jacobian is by forward differences, as MINPACK's lmdif does (J. J. Moré, B. S. Garbow, K. E. Hillstrom,
 * ANL-80-74, 1980): step h_j = √ε·max(|p_j|, scale_j) with ε ≈ 1e-14 (the relative accuracy of the model's Ψ, Δ
 * in double precision), backward when the forward step would leave the bounds. One model evaluation per free
 * parameter: the stack engine has no analytic derivatives, and central differences measured twice the time for
 * no gain in the fitted values (their O(h) error is ~1e-7 relative, far below the parameters' σ).
 * Uncertainty: cov = s²(JᵀWJ)⁻¹, s² = χ²/(N − p), as for the table fits (statistics.ts).
 */
import { NumericalError } from '../errors.ts';
import { minimizeWithBounds, type LmResult } from './lm.ts';
import { CORRELATION_THRESHOLD, rms, SingularCovariance, uncertainty } from './statistics.ts';

export interface PsiDeltaTarget {
  psiDeg: ArrayLike<number>;
  deltaDeg: ArrayLike<number>;
  sigmaPsiDeg: ArrayLike<number>;
  sigmaDeltaDeg: ArrayLike<number>;
}

/** Ψ and Δ (degrees) of the model at every measured point, or null where the model cannot be computed. */
export type PsiDeltaModel = (q: Float64Array) => { psiDeg: ArrayLike<number>; deltaDeg: ArrayLike<number> } | null;

export interface PsiDeltaParameter {
  name: string;
  unit: string;
  bounds: [number, number];
  /** Typical size, for the difference step when the value is near 0. */
  scale: number;
}

export interface PsiDeltaWarning {
  rule: string;
  message: string;
  parameter?: string;
  parameters?: string[];
  value?: number;
}

export interface PsiDeltaRun {
  start: number[];
  values: number[];
  chi2: number;
  iterations: number;
  converged: boolean;
}

export interface PsiDeltaFit {
  values: number[];
  /** 1σ; null for a parameter held at a bound. */
  stderr: Array<number | null>;
  atBound: boolean[];
  correlation: { parameters: string[]; matrix: number[][]; high: Array<{ a: string; b: string; r: number }>; threshold: number };
  chi2: number;
  /** Residuals fitted: 2 per measured point. */
  points: number;
  dof: number;
  reducedChi2: number;
  rmsPsiDeg: number;
  rmsDeltaDeg: number;
  /** Iterations of the best run (`runs` has every run's). */
  iterations: number;
  converged: boolean;
  runs: PsiDeltaRun[];
  /** Ψ, Δ of the model at the optimum, per point. */
  modelPsiDeg: number[];
  modelDeltaDeg: number[];
  warnings: PsiDeltaWarning[];
}

/** The shortest signed angle a − b, in (−180, 180]. */
export function angleDifference(a: number, b: number): number {
  let d = a - b;
  if (d <= 180 && d > -180) return d; // the usual case, without the floating-point remainder (slow in V8)
  d %= 360;
  if (d > 180) d -= 360;
  else if (d <= -180) d += 360;
  return d;
}

const STEP = 1e-7;

/** The residual function of lm.ts for a Ψ/Δ model: whitened residuals, central-difference Jacobian. */
function residualFunction(target: PsiDeltaTarget, model: PsiDeltaModel, parameters: PsiDeltaParameter[]) {
  const count = target.psiDeg.length;
  const evaluate = (q: Float64Array): Float64Array | null => {
    const m = model(q);
    if (!m) return null;
    const out = new Float64Array(2 * count);
    for (let i = 0; i < count; i++) {
      out[i] = m.psiDeg[i] / target.sigmaPsiDeg[i];
      out[count + i] = m.deltaDeg[i];
    }
    return out;
  };
  return (q: Float64Array, free: number[], withJacobian: boolean) => {
    const r = new Float64Array(2 * count);
    const jacobian: Float64Array[] = [];
    const m = evaluate(q);
    if (!m) {
      r.fill(Number.NaN);
      return { r, jacobian: free.map(() => new Float64Array(2 * count).fill(Number.NaN)) };
    }
    for (let i = 0; i < count; i++) {
      r[i] = target.psiDeg[i] / target.sigmaPsiDeg[i] - m[i];
      r[count + i] = angleDifference(target.deltaDeg[i], m[count + i]) / target.sigmaDeltaDeg[i];
    }
    if (!withJacobian) return { r, jacobian };
    for (const j of free) {
      const spec = parameters[j];
      const h = STEP * Math.max(Math.abs(q[j]), spec.scale);
      const step = q[j] + h <= spec.bounds[1] ? h : -h;
      const column = new Float64Array(2 * count);
      const qa = Float64Array.from(q);
      qa[j] = q[j] + step;
      const a = evaluate(qa);
      if (!a) column.fill(Number.NaN);
      else {
        for (let i = 0; i < count; i++) {
          column[i] = (a[i] - m[i]) / step;
          column[count + i] = angleDifference(a[count + i], m[count + i]) / step / target.sigmaDeltaDeg[i];
        }
      }
      jacobian.push(column);
    }
    return { r, jacobian };
  };
}

/**
 * Screening of starting values: from each start vector, only parameter `index` (a thickness) is fitted, the others
 * held at their start values: two model evaluations per iteration instead of p + 1, so many starts cost little.
 * Returns χ² and the fitted value per start (null where the model cannot be computed at the start).
 */
export function screenStarts(
  target: PsiDeltaTarget,
  model: PsiDeltaModel,
  parameters: PsiDeltaParameter[],
  starts: Float64Array[],
  index: number,
  maxIterations = 50,
): Array<{ start: number; value: number; chi2: number; converged: boolean } | null> {
  const residuals = residualFunction(target, model, parameters);
  const bounds = parameters.map((p) => p.bounds);
  return starts.map((start) => {
    try {
      const r = minimizeWithBounds(residuals, start, [index], bounds, maxIterations, () => 'not finite at the start');
      return { start: start[index], value: r.values[index], chi2: r.chi2, converged: r.converged };
    } catch (err) {
      if (err instanceof NumericalError) return null;
      throw err;
    }
  });
}

/**
 * Fit the parameters from every start vector; the run with the lowest χ² is reported, with the others in
 * `runs`. Throws NumericalError when the model cannot be computed at any start.
 */
export function fitPsiDelta(
  target: PsiDeltaTarget,
  model: PsiDeltaModel,
  parameters: PsiDeltaParameter[],
  starts: Float64Array[],
  options: { maxIterations?: number; thinFilm?: { parameter: string; thresholdNm: number } } = {},
): PsiDeltaFit {
  const residuals = residualFunction(target, model, parameters);
  const free = parameters.map((_, j) => j);
  const bounds = parameters.map((p) => p.bounds);
  const maxIterations = options.maxIterations ?? 200;
  const runs: Array<PsiDeltaRun & { result: LmResult }> = [];
  let lastError: unknown;
  for (const start of starts) {
    try {
      const result = minimizeWithBounds(residuals, start, free, bounds, maxIterations, (p) => {
        const list = parameters.map((s, i) => `${s.name}=${p[i]}`).join(', ');
        return `the model Ψ, Δ cannot be computed at the start values (${list}); check the sample description's starting values and materials`;
      });
      runs.push({
        start: [...start],
        values: [...result.values],
        chi2: result.chi2,
        iterations: result.iterations,
        converged: result.converged,
        result,
      });
    } catch (err) {
      if (!(err instanceof NumericalError)) throw err;
      lastError = err;
    }
  }
  if (!runs.length) throw lastError;
  const best = runs.reduce((a, b) => (b.chi2 < a.chi2 ? b : a));
  const values = best.result.values;
  const count = target.psiDeg.length;
  const points = 2 * count;
  const warnings: PsiDeltaWarning[] = [];
  const names = parameters.map((p) => p.name);
  const freeNames = best.result.free.map((j) => names[j]);
  const atBound = parameters.map((_, j) => best.result.atBound.includes(j));
  const stderr: Array<number | null> = parameters.map(() => null);
  let matrix: number[][] = [];
  try {
    const u = uncertainty(best.result.jacobian, freeNames, best.chi2, points);
    best.result.free.forEach((j, a) => {
      stderr[j] = u.stderr[a];
    });
    matrix = u.correlation;
  } catch (err) {
    if (!(err instanceof SingularCovariance)) throw err;
    warnings.push({
      rule: 'undetermined',
      message: `the data do not determine ${err.parameters.join(', ')} (${err.kind === 'dead' ? 'Ψ and Δ do not depend on them here' : 'they move together'}); no uncertainties`,
      parameters: err.parameters,
    });
  }
  const high: Array<{ a: string; b: string; r: number }> = [];
  for (let a = 0; a < matrix.length; a++) {
    for (let b = a + 1; b < matrix.length; b++) {
      if (Math.abs(matrix[a][b]) > CORRELATION_THRESHOLD) high.push({ a: freeNames[a], b: freeNames[b], r: matrix[a][b] });
    }
  }
  for (const pair of high) {
    warnings.push({
      rule: 'strong-correlation',
      message: `${pair.a} and ${pair.b} are strongly correlated (r = ${pair.r.toFixed(3)}): the data constrain a combination of them better than either`,
      parameters: [pair.a, pair.b],
      value: pair.r,
    });
  }
  if (options.thinFilm) {
    const j = names.indexOf(options.thinFilm.parameter);
    if (j >= 0 && values[j] < options.thinFilm.thresholdNm) {
      warnings.push({
        rule: 'thin-film',
        message: `${names[j]} = ${values[j].toPrecision(3)} nm: below about ${options.thinFilm.thresholdNm} nm a film's thickness and its refractive index are strongly correlated (common practice); fix the optical constants or the thickness from another measurement`,
        parameter: names[j],
        value: values[j],
      });
    }
  }
  parameters.forEach((p, j) => {
    if (atBound[j]) {
      warnings.push({
        rule: 'at-bound',
        message: `${p.name} ended on its bound ${values[j] <= p.bounds[0] ? p.bounds[0] : p.bounds[1]} ${p.unit}: the data pull it further; no uncertainty`,
        parameter: p.name,
        value: values[j],
      });
    }
  });
  if (!best.converged) {
    warnings.push({
      rule: 'not-converged',
      message: `the fit stopped after ${best.iterations} iterations without converging`,
      value: best.iterations,
    });
  }
  const dof = points - best.result.free.length;
  const reducedChi2 = dof > 0 ? best.chi2 / dof : Number.NaN;
  if (reducedChi2 > 25) {
    warnings.push({
      rule: 'poor-fit',
      message: `reduced χ² = ${reducedChi2.toPrecision(3)}: the model does not describe the data within their uncertainties (check the layers, materials and angles)`,
      value: reducedChi2,
    });
  }
  const m = model(values);
  if (!m) throw new NumericalError('the model Ψ, Δ cannot be computed at the optimum');
  const dPsi = new Float64Array(count);
  const dDelta = new Float64Array(count);
  for (let i = 0; i < count; i++) {
    dPsi[i] = target.psiDeg[i] - m.psiDeg[i];
    dDelta[i] = angleDifference(target.deltaDeg[i], m.deltaDeg[i]);
  }
  return {
    values: [...values],
    stderr,
    atBound,
    correlation: { parameters: freeNames, matrix, high, threshold: CORRELATION_THRESHOLD },
    chi2: best.chi2,
    points,
    dof,
    reducedChi2,
    rmsPsiDeg: rms(dPsi),
    rmsDeltaDeg: rms(dDelta),
    iterations: best.iterations,
    converged: best.converged,
    runs: runs.map(({ result: _, ...run }) => run),
    modelPsiDeg: Array.from(m.psiDeg),
    modelDeltaDeg: Array.from(m.deltaDeg),
    warnings,
  };
}
