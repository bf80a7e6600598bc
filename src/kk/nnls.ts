/**
 * Non-negative least squares: minimise ½xᵀGx − bᵀx (G = AᵀA, b = Aᵀy) subject to x_j ≥ 0 for the
 * constrained indices (the others are free).
 *
 * Algorithm NNLS of C. L. Lawson and R. J. Hanson, "Solving Least Squares Problems", Prentice-Hall 1974,
 * ch. 23, run on the normal equations as in R. Bro and S. De Jong, "A fast
 * non-negativity-constrained least squares algorithm", J. Chemometrics 11, 393 (1997):
 * the cost per iteration then depends on the number of unknowns only, not on the number of data rows.
 * Free variables stay in the passive set from the start and are never stepped back (Lawson & Hanson's
 * remark on unconstrained components). Each passive-set subproblem is solved by Cholesky.
 */
import { NumericalError } from '../errors.ts';

export interface NnlsResult {
  x: Float64Array;
  iterations: number;
}

/** Solve G_PP z = b_P by Cholesky; null when G_PP is not positive definite. */
function solvePassive(gram: Float64Array, size: number, b: Float64Array, passive: number[]): Float64Array | null {
  const p = passive.length;
  const l = new Float64Array(p * p);
  for (let i = 0; i < p; i++) {
    for (let j = 0; j <= i; j++) {
      let sum = gram[passive[i] * size + passive[j]];
      for (let q = 0; q < j; q++) sum -= l[i * p + q] * l[j * p + q];
      if (i === j) {
        if (!(sum > 0)) return null;
        l[i * p + i] = Math.sqrt(sum);
      } else {
        l[i * p + j] = sum / l[j * p + j];
      }
    }
  }
  const z = new Float64Array(p);
  for (let i = 0; i < p; i++) {
    let sum = b[passive[i]];
    for (let q = 0; q < i; q++) sum -= l[i * p + q] * z[q];
    z[i] = sum / l[i * p + i];
  }
  for (let i = p - 1; i >= 0; i--) {
    let sum = z[i];
    for (let q = i + 1; q < p; q++) sum -= l[q * p + i] * z[q];
    z[i] = sum / l[i * p + i];
  }
  return z;
}

/**
 * @param gram  G = AᵀA, row-major size×size (positive definite on every subset: add a small ridge).
 * @param b     Aᵀy.
 * @param free  indices without the x ≥ 0 constraint.
 */
export function nnlsNormal(gram: Float64Array, b: Float64Array, free: ReadonlySet<number> = new Set()): NnlsResult {
  const size = b.length;
  const x = new Float64Array(size);
  const inPassive = new Uint8Array(size);
  const excluded = new Uint8Array(size);
  for (const j of free) inPassive[j] = 1;
  const tolerance = 1e-12 * Math.max(1, ...Array.from(b, Math.abs));
  const maxIterations = 30 * size + 30;
  let iterations = 0;
  const gradient = () => {
    const w = new Float64Array(size);
    for (let i = 0; i < size; i++) {
      let sum = b[i];
      for (let j = 0; j < size; j++) sum -= gram[i * size + j] * x[j];
      w[i] = sum;
    }
    return w;
  };
  const passiveList = () => {
    const list: number[] = [];
    for (let j = 0; j < size; j++) if (inPassive[j]) list.push(j);
    return list;
  };
  // Free variables first: solve for them alone so the gradient below is meaningful.
  if (free.size > 0) {
    const passive = passiveList();
    const z = solvePassive(gram, size, b, passive);
    if (!z) throw new NumericalError('Kramers-Kronig fit: singular system for the free terms', 'kk-singular');
    passive.forEach((j, i) => (x[j] = z[i]));
  }
  for (;;) {
    const w = gradient();
    let best = -1;
    for (let j = 0; j < size; j++) if (!inPassive[j] && !excluded[j] && w[j] > tolerance && (best < 0 || w[j] > w[best])) best = j;
    if (best < 0) break;
    inPassive[best] = 1;
    // Inner loop: step towards the unconstrained solution on the passive set, dropping variables that hit zero.
    for (;;) {
      if (++iterations > maxIterations) {
        throw new NumericalError('Kramers-Kronig fit: non-negative least squares did not converge', 'kk-no-convergence');
      }
      const passive = passiveList();
      const z = solvePassive(gram, size, b, passive);
      if (!z) {
        // The newest column is (numerically) dependent on the passive set: leave it out for good.
        inPassive[best] = 0;
        excluded[best] = 1;
        break;
      }
      let alpha = 1;
      let blocking = -1;
      passive.forEach((j, i) => {
        if (free.has(j) || z[i] > 0) return;
        const step = x[j] / (x[j] - z[i]);
        if (step < alpha) {
          alpha = step;
          blocking = j;
        }
      });
      if (blocking < 0) {
        passive.forEach((j, i) => (x[j] = z[i]));
        break;
      }
      passive.forEach((j, i) => {
        x[j] += alpha * (z[i] - x[j]);
        if (!free.has(j) && x[j] <= 1e-15 * Math.max(1, Math.abs(z[i]))) {
          x[j] = 0;
          inPassive[j] = 0;
        }
      });
      inPassive[blocking] = 0;
      x[blocking] = 0;
    }
  }
  return { x, iterations };
}
