/**
 * Fit the KK-consistent basis of basis.ts jointly to measured ε1 and ε2 (after B. Johs and J. S. Hale,
 * phys. stat. sol. (a) 205, 715 (2008)) by weighted non-negative least squares:
 *   minimise Σ w1ᵢ²(ε1ᵢ − Σ cⱼφ1ⱼ(Eᵢ))² + w2ᵢ²(ε2ᵢ − Σ cⱼφ2ⱼ(Eᵢ))² + λ Σ (Δ²c)²,  cⱼ ≥ 0 except ε∞.
 * The normal equations are accumulated point by point (cost ∝ points × basis²), scaled to unit diagonal
 * (NNLS is invariant to positive column scaling) and solved by nnls.ts.
 * The optional penalty λ on second differences of neighbouring triangle heights (Tikhonov smoothing,
 * common practice) is expressed relative to the mean diagonal of the triangle block, so it does not depend
 * on the units or the number of points.
 */
import { makeKkBasis, fillBasisRows, sharpPeakColumns, type KkBasis } from './basis.ts';
import { differenceNoise } from './residuals.ts';
import { nnlsNormal } from './nnls.ts';
import { maxOf, minOf } from '../optics/extremes.ts';

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

/** Points per block of the normal-equation accumulation (size × BLOCK doubles stay in cache). */
const BLOCK = 1024;

export function fitKkRepresentation(input: KkFitInput, options: KkFitOptions): KkFit {
  const count = input.energyEv.length;
  const minEv = minOf(input.energyEv);
  const maxEv = maxOf(input.energyEv);
  const spacing = (maxEv - minEv) / options.intervals;
  const basis = makeKkBasis(minEv, maxEv, options.intervals, sharpPeakColumns(input.energyEv, input.eps2, spacing, 10 * differenceNoise(input.eps2)));
  const firstOscillator = basis.triangleCount + basis.polesEv.length;
  const nonZero = new Int32Array(2 + basis.oscillators.length);
  const size = basis.columnCount;
  const row1 = new Float64Array(size);
  const row2 = new Float64Array(size);
  const scratch = new Float64Array(basis.knotsEv.length);
  const gram = new Float64Array(size * size);
  const rhs = new Float64Array(size);
  // Points go in blocks: the weighted ε1 design rows of one block, column-major so each Gram entry
  // is one contiguous dot product, are added to the normal equations and dropped. Memory stays
  // size × BLOCK whatever the table's length (the whole design matrix of a million-row table
  // would take about 1 GB).
  const block = new Float64Array(size * BLOCK);
  const yBlock = new Float64Array(BLOCK);
  for (let start = 0; start < count; start += BLOCK) {
    const length = Math.min(BLOCK, count - start);
    for (let b = 0; b < length; b++) {
      const i = start + b;
      fillBasisRows(basis, input.energyEv[i], row1, row2, scratch);
      const w1 = input.weight1[i];
      for (let p = 0; p < size; p++) block[p * BLOCK + b] = w1 * row1[p];
      // ε2 rows are sparse: only the two triangles around Eᵢ and the oscillator columns are non-zero.
      const w2 = input.weight2[i] * input.weight2[i];
      let m = 0;
      for (let p = 0; p < basis.triangleCount; p++) if (row2[p] !== 0) nonZero[m++] = p;
      for (let o = 0; o < basis.oscillators.length; o++) nonZero[m++] = firstOscillator + o;
      for (let x = 0; x < m; x++) {
        const p = nonZero[x];
        const a = w2 * row2[p];
        rhs[p] += a * input.eps2[i];
        for (let z = x; z < m; z++) gram[p * size + nonZero[z]] += a * row2[nonZero[z]];
      }
    }
    for (let b = 0; b < length; b++) yBlock[b] = input.weight1[start + b] * input.eps1[start + b];
    addGramBlock(block, yBlock, length, size, gram, rhs);
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

  // The reconstruction recomputes each point's basis row rather than keeping the design matrix.
  const eps1: number[] = new Array(count);
  const eps2: number[] = new Array(count);
  for (let i = 0; i < count; i++) {
    fillBasisRows(basis, input.energyEv[i], row1, row2, scratch);
    let e1 = 0;
    let e2 = 0;
    for (let p = 0; p < size; p++) {
      const c = coefficients[p];
      if (c === 0) continue;
      e1 += row1[p] * c;
      e2 += row2[p] * c;
    }
    eps1[i] = e1;
    eps2[i] = e2;
  }
  return { eps1, eps2, epsInf: coefficients[size - 1], basis, coefficients, iterations: solution.iterations };
}

/**
 * gram[p][q] += Σ_b block[p][b]·block[q][b] (q ≥ p) and rhs[p] += Σ_b block[p][b]·y[b], rows of length
 * BLOCK. Four columns q at a time share each load of column p: this is most of the check's time on
 * long tables (basis² × points multiply-adds).
 */
function addGramBlock(block: Float64Array, y: Float64Array, length: number, size: number, gram: Float64Array, rhs: Float64Array): void {
  for (let p = 0; p < size; p++) {
    const op = p * BLOCK;
    let sumY = 0;
    for (let b = 0; b < length; b++) sumY += block[op + b] * y[b];
    rhs[p] += sumY;
    let q = p;
    for (; q + 3 < size; q += 4) {
      const o0 = q * BLOCK;
      const o1 = o0 + BLOCK;
      const o2 = o1 + BLOCK;
      const o3 = o2 + BLOCK;
      let s0 = 0;
      let s1 = 0;
      let s2 = 0;
      let s3 = 0;
      for (let b = 0; b < length; b++) {
        const v = block[op + b];
        s0 += v * block[o0 + b];
        s1 += v * block[o1 + b];
        s2 += v * block[o2 + b];
        s3 += v * block[o3 + b];
      }
      const g = p * size + q;
      gram[g] += s0;
      gram[g + 1] += s1;
      gram[g + 2] += s2;
      gram[g + 3] += s3;
    }
    for (; q < size; q++) {
      const oq = q * BLOCK;
      let sum = 0;
      for (let b = 0; b < length; b++) sum += block[op + b] * block[oq + b];
      gram[p * size + q] += sum;
    }
  }
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
