/**
 * Fit the KK-consistent basis of basis.ts jointly to measured ε1 and ε2 (after B. Johs and J. S. Hale,
 * phys. stat. sol. (a) 205, 715 (2008), published) by weighted non-negative least squares:
 *   minimise Σ w1ᵢ²(ε1ᵢ − Σ cⱼφ1ⱼ(Eᵢ))² + w2ᵢ²(ε2ᵢ − Σ cⱼφ2ⱼ(Eᵢ))² + λ Σ (Δ²c)²,  cⱼ ≥ 0 except ε∞.
 * The normal equations are accumulated point by point (cost ∝ points × basis²), scaled to unit diagonal
 * (NNLS is invariant to positive column scaling) and solved by nnls.ts.
 * The optional penalty λ on second differences of neighbouring triangle heights (Tikhonov smoothing,
 * common practice) is expressed relative to the mean diagonal of the triangle block, so it does not depend
 * on the units or the number of points.
 */
import { makeKkBasis, fillBasisRows, type KkBasis } from './basis.ts';
import { nnlsNormal } from './nnls.ts';

export interface KkFitInput {
  energyEv: number[];
  eps1: number[];
  eps2: number[];
  /** 1/σ of each ε1 and ε2 value. */
  weight1: number[];
  weight2: number[];
}

export interface KkFitOptions {
  /** Knot intervals across the measured window. */
  intervals: number;
  /** Relative weight λ of the second-difference penalty on triangle heights. */
  smoothing: number;
}

export interface KkFit {
  eps1: number[];
  eps2: number[];
  epsInf: number;
  basis: KkBasis;
  /** Non-negative triangle heights and pole strengths, then ε∞. */
  coefficients: number[];
  iterations: number;
}

/** Scale-free ridge keeping every passive-set subsystem positive definite. */
const RIDGE = 1e-11;

export function fitKkRepresentation(input: KkFitInput, options: KkFitOptions): KkFit {
  const count = input.energyEv.length;
  const minEv = Math.min(...input.energyEv);
  const maxEv = Math.max(...input.energyEv);
  const basis = makeKkBasis(minEv, maxEv, options.intervals);
  const size = basis.columnCount;
  // ε1 design columns, weighted, column-major so each Gram entry is one contiguous dot product.
  const columns = new Float64Array(size * count);
  const eps2Rows = new Float64Array(count * size);
  const row1 = new Float64Array(size);
  const scratch = new Float64Array(basis.knotsEv.length);
  const gram = new Float64Array(size * size);
  const rhs = new Float64Array(size);
  for (let i = 0; i < count; i++) {
    const r2 = eps2Rows.subarray(i * size, (i + 1) * size);
    fillBasisRows(basis, input.energyEv[i], row1, r2, scratch);
    const w1 = input.weight1[i];
    for (let p = 0; p < size; p++) columns[p * count + i] = w1 * row1[p];
    // ε2 rows are sparse: only the two triangles around Eᵢ are non-zero.
    const w2 = input.weight2[i] * input.weight2[i];
    for (let p = 0; p < basis.triangleCount; p++) {
      const a = w2 * r2[p];
      if (a === 0) continue;
      rhs[p] += a * input.eps2[i];
      for (let q = p; q < basis.triangleCount; q++) gram[p * size + q] += a * r2[q];
    }
  }
  for (let p = 0; p < size; p++) {
    const cp = columns.subarray(p * count, (p + 1) * count);
    let sumY = 0;
    for (let i = 0; i < count; i++) sumY += cp[i] * input.weight1[i] * input.eps1[i];
    rhs[p] += sumY;
    for (let q = p; q < size; q++) gram[p * size + q] += dot(cp, columns.subarray(q * count, (q + 1) * count));
  }
  for (let p = 0; p < size; p++) for (let q = 0; q < p; q++) gram[p * size + q] = gram[q * size + p];
  addSmoothingPenalty(gram, size, basis.triangleCount, options.smoothing);

  const scale = new Float64Array(size);
  for (let p = 0; p < size; p++) scale[p] = Math.sqrt(gram[p * size + p]) || 1;
  for (let p = 0; p < size; p++) {
    rhs[p] /= scale[p];
    for (let q = 0; q < size; q++) gram[p * size + q] /= scale[p] * scale[q];
    gram[p * size + p] += RIDGE;
  }
  const solution = nnlsNormal(gram, rhs, new Set([size - 1]));
  const coefficients = Array.from(solution.x, (v, p) => v / scale[p]);

  const eps1: number[] = new Array(count).fill(0);
  const eps2: number[] = new Array(count).fill(0);
  for (let p = 0; p < size; p++) {
    if (coefficients[p] === 0) continue;
    for (let i = 0; i < count; i++) {
      eps1[i] += (columns[p * count + i] / input.weight1[i]) * coefficients[p];
      eps2[i] += eps2Rows[i * size + p] * coefficients[p];
    }
  }
  return { eps1, eps2, epsInf: coefficients[size - 1], basis, coefficients, iterations: solution.iterations };
}

function dot(a: Float64Array, b: Float64Array): number {
  let sum = 0;
  for (let i = 0; i < a.length; i++) sum += a[i] * b[i];
  return sum;
}

/** Add λ·DᵀD (D: second differences of the triangle heights), λ relative to the mean triangle diagonal. */
function addSmoothingPenalty(gram: Float64Array, size: number, triangles: number, smoothing: number): void {
  if (smoothing <= 0 || triangles < 3) return;
  let trace = 0;
  for (let p = 0; p < triangles; p++) trace += gram[p * size + p];
  const lambda = (smoothing * trace) / triangles;
  const stencil = [1, -2, 1];
  for (let j = 0; j + 2 < triangles; j++) {
    for (let a = 0; a < 3; a++) {
      for (let b = 0; b < 3; b++) gram[(j + a) * size + (j + b)] += lambda * stencil[a] * stencil[b];
    }
  }
}
