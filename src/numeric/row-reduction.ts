/**
 * Weighted least squares on many rows in O(k^2) memory: the rows are folded
 * one at a time into a k-by-k triangle by square-root-free Givens rotations,
 * and the small triangle is then factorised by the Householder QR of
 * `householder-qr.ts`, which keeps its rank detection, solve and covariance.
 *
 * Method: Gentleman, W. M. (1973), Least squares computations by Givens
 * transformations without square roots, *IMA Journal of Applied Mathematics*
 * 12(3), 329-336; in the row-inclusion form of Miller, A. J. (1992),
 * Algorithm AS 274: Least squares routines to supplement those of Gentleman,
 * *Applied Statistics* 41(2), 458-478 (subroutine INCLUD). The triangle is
 * held as D^{1/2} R-bar with D diagonal and R-bar unit upper triangular; a
 * row x with weight w updates, for each column j with x_j != 0,
 *
 *     d' = d_j + w x_j^2,  c = d_j / d',  s = w x_j / d',  w <- c w,
 *     x_m <- x_m - x_j rbar_jm,  rbar_jm <- c rbar_jm + s x_m  (m > j),
 *
 * and likewise for the response. Givens rotations are orthogonal, so
 * R = D^{1/2} R-bar is the R factor of W^{1/2} X (up to signs), with the
 * conditioning of a QR, not of the normal equations (Golub & Van Loan 2013,
 * §5.1.8-§5.1.13 on Givens QR, §5.3.3 on QR least squares). Since
 * X'WX = R'R, the Householder QR of R makes the same rank decisions as that
 * of W^{1/2} X: the column norms and every remaining norm agree.
 *
 * Each column is first scaled by a power of two (exact), so that its largest
 * entry is in [1, 2) and columns of tiny or huge entries neither underflow
 * nor overflow in d; the scaling is folded into the returned factorisation's
 * `columnExponents`, so solves and covariances come back unscaled.
 *
 * Cost: O(rows * k^2) time, O(k^2) memory, one pass over the design.
 */
import type { DesignMatrix } from './design-matrix.js';
import { type QrDecomposition, DEFAULT_RANK_TOLERANCE, householderQr } from './householder-qr.js';

/** A weighted least-squares problem reduced to its k-by-k triangle. */
export interface ReducedLeastSquares {
  /** QR of the triangle; `solveLeastSquares(qr, effects)` and `inverseCrossProduct(qr)` give the full problem's answers. */
  readonly qr: QrDecomposition;
  /** Q'z of the (weighted, scaled) response, length k; zeros when no response was given. */
  readonly effects: Float64Array;
  /** Weighted residual sum of squares of the response (0 when none was given). */
  readonly residualSumOfSquares: number;
}

/**
 * Power-of-two exponents that bring each column's largest |entry| into [1, 2).
 * Compute once per design and pass to {@link reduceWeightedRows}.
 */
export function columnExponents(design: DesignMatrix): Int32Array {
  const exponents = new Int32Array(design.columns);
  for (let j = 0; j < design.columns; j += 1) {
    let largest = 0;
    const offset = j * design.rows;
    for (let i = 0; i < design.rows; i += 1) {
      const value = Math.abs(design.values[offset + i] as number);
      if (value > largest) largest = value;
    }
    if (largest > 0 && Number.isFinite(largest)) exponents[j] = -Math.floor(Math.log2(largest));
  }
  return exponents;
}

/** Streams rows into the square-root-free triangle (AS 274 INCLUD). */
export class RowTriangle {
  readonly size: number;
  /** Diagonal D. */
  readonly diagonal: Float64Array;
  /** Unit upper triangle R-bar, k-by-k row-major (the strict upper part is used). */
  readonly upper: Float64Array;
  readonly theta: Float64Array;
  residualSumOfSquares = 0;
  private readonly row: Float64Array;

  constructor(size: number) {
    this.size = size;
    this.diagonal = new Float64Array(size);
    this.upper = new Float64Array(size * size);
    this.theta = new Float64Array(size);
    this.row = new Float64Array(size);
  }

  /** The scratch row to fill before {@link include}. */
  get scratch(): Float64Array {
    return this.row;
  }

  /** Fold the scratch row, with weight `weight` and response `response`, into the triangle. */
  include(weight: number, response: number): void {
    const size = this.size;
    const row = this.row;
    const diagonal = this.diagonal;
    const upper = this.upper;
    const theta = this.theta;
    let w = weight;
    let y = response;
    for (let j = 0; j < size; j += 1) {
      if (w === 0) return;
      const xj = row[j] as number;
      if (xj === 0) continue;
      const dj = diagonal[j] as number;
      const updated = dj + w * xj * xj;
      const c = dj / updated;
      const s = (w * xj) / updated;
      w *= c;
      diagonal[j] = updated;
      const base = j * size;
      for (let m = j + 1; m < size; m += 1) {
        const xm = row[m] as number;
        const r = upper[base + m] as number;
        row[m] = xm - xj * r;
        upper[base + m] = c * r + s * xm;
      }
      const t = theta[j] as number;
      const previous = y;
      y = previous - xj * t;
      theta[j] = c * t + s * previous;
    }
    this.residualSumOfSquares += w * y * y;
  }

  /** R = D^{1/2} R-bar (column-major) and Q'z = D^{1/2} theta. */
  factor(): { readonly values: Float64Array; readonly effects: Float64Array } {
    const size = this.size;
    const values = new Float64Array(size * size);
    const effects = new Float64Array(size);
    for (let j = 0; j < size; j += 1) {
      const root = Math.sqrt(this.diagonal[j] as number);
      values[j * size + j] = root;
      for (let m = j + 1; m < size; m += 1) values[m * size + j] = root * (this.upper[j * size + m] as number);
      effects[j] = root * (this.theta[j] as number);
    }
    return { values, effects };
  }
}

/**
 * Reduce min sum_i w_i (z_i - x_i b)^2 to its k-by-k triangle and factorise
 * it. Rows with weight 0 (or non-finite weight) are left out.
 *
 * @param weights per-row weights w_i (null: all 1)
 * @param response per-row z_i (null: no response; `effects` are zeros)
 * @param exponents from {@link columnExponents} of the same design
 */
export function reduceWeightedRows(
  design: DesignMatrix,
  weights: ArrayLike<number> | null,
  response: ArrayLike<number> | null,
  exponents: Int32Array = columnExponents(design),
  tolerance: number = DEFAULT_RANK_TOLERANCE,
): ReducedLeastSquares {
  const { rows, columns, values } = design;
  const triangle = new RowTriangle(columns);
  const row = triangle.scratch;
  const factors = Float64Array.from(exponents, (exponent) => 2 ** exponent);
  const diagonal = triangle.diagonal;
  const upper = triangle.upper;
  const theta = triangle.theta;
  let residualSumOfSquares = 0;
  // The body of RowTriangle.include, inlined: this loop is the cost of every IRLS iteration.
  for (let i = 0; i < rows; i += 1) {
    let w = weights === null ? 1 : (weights[i] as number);
    if (!(w > 0) || !Number.isFinite(w)) continue;
    for (let j = 0; j < columns; j += 1) row[j] = (values[j * rows + i] as number) * (factors[j] as number);
    let y = response === null ? 0 : (response[i] as number);
    for (let j = 0; j < columns; j += 1) {
      const xj = row[j] as number;
      if (xj === 0) continue;
      const dj = diagonal[j] as number;
      const updated = dj + w * xj * xj;
      const c = dj / updated;
      const s = (w * xj) / updated;
      w *= c;
      diagonal[j] = updated;
      const base = j * columns;
      for (let m = j + 1; m < columns; m += 1) {
        const xm = row[m] as number;
        const r = upper[base + m] as number;
        row[m] = xm - xj * r;
        upper[base + m] = c * r + s * xm;
      }
      const t = theta[j] as number;
      const previous = y;
      y = previous - xj * t;
      theta[j] = c * t + s * previous;
      if (w === 0) break;
    }
    residualSumOfSquares += w * y * y;
  }
  triangle.residualSumOfSquares = residualSumOfSquares;
  return finishReduction(triangle, exponents, tolerance);
}

/** Factorise a filled triangle; the column scaling `exponents` is folded into the result. */
export function finishReduction(triangle: RowTriangle, exponents: Int32Array, tolerance: number = DEFAULT_RANK_TOLERANCE): ReducedLeastSquares {
  const { values, effects } = triangle.factor();
  const size = triangle.size;
  const qr = householderQr(values, size, size, tolerance);
  const combined = Int32Array.from(qr.columnExponents, (exponent, j) => exponent + (exponents[j] as number));
  return { qr: { ...qr, columnExponents: combined }, effects, residualSumOfSquares: triangle.residualSumOfSquares };
}
