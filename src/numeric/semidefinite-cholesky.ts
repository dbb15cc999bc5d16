/**
 * Cholesky factorisation of a symmetric positive semi-definite matrix,
 * L L' = A (row-major, size x size), with a verdict on semi-definiteness.
 *
 * Pivots at or below `1e-12 x` the largest diagonal leave their column zero
 * (Higham, N. J. (2002), *Accuracy and Stability of Numerical Algorithms*,
 * 2nd ed., section 10.3, on the semi-definite case). The matrix is not
 * semi-definite when a pivot is clearly negative, or when a zero pivot's
 * column still has entries a rank-deficient semi-definite matrix could not
 * have (|a_ij| <= sqrt(a_ii a_jj) fails for the remainder).
 *
 * Used to check a model file's covariance and to draw coefficient vectors
 * from it. Cost: O(size^3 / 3).
 */

export interface SemiDefiniteFactor {
  /** Lower-triangular factor, row-major. */
  readonly lower: Float64Array;
  readonly positiveSemiDefinite: boolean;
}

/** Relative pivot tolerance. */
const PIVOT_TOLERANCE = 1e-12;

export function semiDefiniteCholesky(matrix: ArrayLike<number>, size: number): SemiDefiniteFactor {
  const lower = new Float64Array(size * size);
  let largestDiagonal = 0;
  for (let index = 0; index < size; index += 1) largestDiagonal = Math.max(largestDiagonal, Math.abs(matrix[index * size + index] as number));
  const tolerance = PIVOT_TOLERANCE * largestDiagonal;
  let positiveSemiDefinite = true;
  for (let column = 0; column < size; column += 1) {
    let pivot = matrix[column * size + column] as number;
    for (let inner = 0; inner < column; inner += 1) pivot -= (lower[column * size + inner] as number) ** 2;
    if (pivot < -Math.sqrt(PIVOT_TOLERANCE) * largestDiagonal) positiveSemiDefinite = false;
    if (!(pivot > tolerance)) {
      // A zero pivot: the rest of this column of the remainder must vanish too.
      for (let row = column + 1; row < size; row += 1) {
        let sum = matrix[row * size + column] as number;
        for (let inner = 0; inner < column; inner += 1) sum -= (lower[row * size + inner] as number) * (lower[column * size + inner] as number);
        if (Math.abs(sum) > Math.sqrt(PIVOT_TOLERANCE) * largestDiagonal) positiveSemiDefinite = false;
      }
      continue; // the column stays zero
    }
    const root = Math.sqrt(pivot);
    lower[column * size + column] = root;
    for (let row = column + 1; row < size; row += 1) {
      let sum = matrix[row * size + column] as number;
      for (let inner = 0; inner < column; inner += 1) sum -= (lower[row * size + inner] as number) * (lower[column * size + inner] as number);
      lower[row * size + column] = sum / root;
    }
  }
  return { lower, positiveSemiDefinite };
}
