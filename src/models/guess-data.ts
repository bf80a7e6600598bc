/**
 * The data initial-guess rules work on (pure). Apart from grid.ts because it brings the least-squares solver
 * (ml-matrix) with it, which only fits need.
 */
import { spectralGrid } from './grid.ts';
import { linearLeastSquares } from './least-squares.ts';
import type { GuessData } from './types.ts';

/** Guess data: the grid plus n, k and ε1 = n² − k², ε2 = 2nk (ε = N², common practice). */
export function guessData(wavelengthNm: ArrayLike<number>, n: ArrayLike<number>, k: ArrayLike<number>): GuessData {
  const grid = spectralGrid(wavelengthNm);
  const count = wavelengthNm.length;
  const eps1 = new Float64Array(count);
  const eps2 = new Float64Array(count);
  for (let i = 0; i < count; i++) {
    eps1[i] = n[i] * n[i] - k[i] * k[i];
    eps2[i] = 2 * n[i] * k[i];
  }
  return { ...grid, n: Float64Array.from(n), k: Float64Array.from(k), eps1, eps2, leastSquares: linearLeastSquares };
}
