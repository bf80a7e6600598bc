/** Small linear least-squares solve used by initial-guess rules (pure). */
import { Matrix, SingularValueDecomposition } from 'ml-matrix';

/**
 * Coefficients a minimizing ‖Σ_j a_j·columns[j] − y‖² (SVD solve, so collinear columns give the
 * minimum-norm answer instead of failing). Non-finite results become 0.
 */
export function linearLeastSquares(columns: ArrayLike<number>[], y: ArrayLike<number>): number[] {
  if (columns.length === 0) return [];
  const rows = y.length;
  const design = new Matrix(rows, columns.length);
  for (let j = 0; j < columns.length; j++) for (let i = 0; i < rows; i++) design.set(i, j, columns[j][i]);
  const rhs = Matrix.columnVector(Array.from(y));
  const solution = new SingularValueDecomposition(design, { autoTranspose: true }).solve(rhs);
  return solution.to1DArray().map((v) => (Number.isFinite(v) ? v : 0));
}
