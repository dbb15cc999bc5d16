/**
 * The Wald test that a set of coefficients is zero: W = b' V^-1 b for the
 * estimates b of those coefficients and their covariance V (in the size study
 * the fit's cluster-robust CR1 covariance), referred to chi-square with as
 * many degrees of freedom as coefficients (Wald, A. (1943), Transactions of
 * the American Mathematical Society 54, 426-482; with a robust covariance as
 * in Cameron, A. C. and Miller, D. L. (2015), Journal of Human Resources
 * 50(2), 317-372, §II.D). With one coefficient it is the square of the usual
 * z statistic. V^-1 b by Cholesky (`numeric/cholesky.ts`).
 *
 * Cost: O(m^3) for m tested coefficients.
 */
import { choleskySolve } from '../numeric/cholesky.js';
import { chiSquareUpperTail } from '../stats/distributions.js';

export interface WaldTest {
  readonly statistic: number;
  readonly df: number;
  readonly pValue: number;
}

/**
 * Test coefficients `indices` of `estimates` (covariance k-by-k row-major);
 * null when their covariance is not positive definite.
 *
 * @example
 *   waldTest([0.5, -0.02], Float64Array.of(0.01, 0, 0, 0.0001), [1]); // statistic 4, df 1, p 0.0455
 */
export function waldTest(estimates: ArrayLike<number>, covariance: ArrayLike<number>, indices: readonly number[]): WaldTest | null {
  const size = estimates.length;
  const m = indices.length;
  if (m === 0) return null;
  const block = new Float64Array(m * m);
  const tested = new Float64Array(m);
  indices.forEach((row, a) => {
    tested[a] = estimates[row] as number;
    indices.forEach((column, b) => (block[a * m + b] = covariance[row * size + column] as number));
  });
  const solved = choleskySolve(block, tested);
  if (solved === null) return null;
  let statistic = 0;
  for (let a = 0; a < m; a += 1) statistic += (tested[a] as number) * (solved[a] as number);
  if (!Number.isFinite(statistic)) return null;
  return { statistic, df: m, pValue: chiSquareUpperTail(statistic, m) };
}
