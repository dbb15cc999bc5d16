/**
 * Solve A x = b for a small symmetric positive definite A by Cholesky
 * factorisation A = L L' (Golub, G. H. and Van Loan, C. F. (2013), *Matrix
 * Computations*, 4th ed., Algorithm 4.2.1), or report that A is not
 * positive definite.
 *
 * Used only for Newton steps on a k-by-k observed information matrix, where
 * an inexact solve slows convergence but cannot move the fixed point (the
 * score, computed directly, decides where iteration stops). Least squares in
 * this project always goes through Householder QR instead.
 *
 * Cost: O(k^3 / 3).
 */

/**
 * @param matrix k-by-k row-major, symmetric (only the lower triangle is read)
 * @param rightHandSide length k
 * @returns x, or null when a pivot is not positive (A not numerically positive definite)
 */
export function choleskySolve(matrix: Float64Array, rightHandSide: ArrayLike<number>): Float64Array | null {
  const size = rightHandSide.length;
  const lower = new Float64Array(size * size);
  for (let j = 0; j < size; j += 1) {
    let diagonal = matrix[j * size + j] as number;
    for (let m = 0; m < j; m += 1) diagonal -= (lower[j * size + m] as number) ** 2;
    if (!(diagonal > 0) || !Number.isFinite(diagonal)) return null;
    const pivot = Math.sqrt(diagonal);
    lower[j * size + j] = pivot;
    for (let i = j + 1; i < size; i += 1) {
      let sum = matrix[i * size + j] as number;
      for (let m = 0; m < j; m += 1) sum -= (lower[i * size + m] as number) * (lower[j * size + m] as number);
      lower[i * size + j] = sum / pivot;
    }
  }
  const solution = Float64Array.from(rightHandSide as ArrayLike<number>);
  for (let i = 0; i < size; i += 1) {
    let sum = solution[i] as number;
    for (let m = 0; m < i; m += 1) sum -= (lower[i * size + m] as number) * (solution[m] as number);
    solution[i] = sum / (lower[i * size + i] as number);
  }
  for (let i = size - 1; i >= 0; i -= 1) {
    let sum = solution[i] as number;
    for (let m = i + 1; m < size; m += 1) sum -= (lower[m * size + i] as number) * (solution[m] as number);
    solution[i] = sum / (lower[i * size + i] as number);
  }
  return solution;
}
