/**
 * Jain's fairness index, J = (Σx)² / (n Σx²), from Jain, R., Chiu, D.-M. and
 * Hawe, W. R. (1984), "A quantitative measure of fairness and discrimination
 * for resource allocation in shared computer systems", DEC Research Report
 * DEC-TR-301.
 *
 * J lies in [1/n, 1]: 1 when every share is equal, 1/n when one player takes
 * everything, and k/n when k players share equally and the rest get nothing.
 * lagparity uses it to score how evenly a lobby's expected performance is
 * spread after compensation.
 */
import { show } from '../issues.js';

/**
 * Jain's fairness index of non-negative shares.
 *
 * All-zero input is defined here as 1: every share is equal (to zero), which is
 * the limit of J for equal shares; the formula itself would give 0/0.
 *
 * The shares are divided by the largest one before squaring, which leaves J
 * unchanged and keeps Σx² from overflowing or underflowing.
 *
 * Cost: O(n).
 *
 * @throws RangeError on empty input or a negative, NaN or infinite share.
 * @example
 *   jainIndex([1, 1, 1, 1]); // 1
 *   jainIndex([5, 0, 0, 0]); // 0.25
 */
export function jainIndex(values: ArrayLike<number>): number {
  const count = values.length;
  if (count === 0) throw new RangeError('`values` requires at least one number, got an empty list');
  let largest = 0;
  for (let index = 0; index < count; index += 1) {
    const value = values[index] as number;
    if (!(Number.isFinite(value) && value >= 0)) {
      throw new RangeError(`\`values[${index}]\` requires a finite number >= 0, got ${show(value)}`);
    }
    if (value > largest) largest = value;
  }
  if (largest === 0) return 1;
  let sum = 0;
  let sumOfSquares = 0;
  for (let index = 0; index < count; index += 1) {
    const share = (values[index] as number) / largest;
    sum += share;
    sumOfSquares += share * share;
  }
  // Cauchy–Schwarz bounds J by 1; the clamp removes a last-bit excess from rounding.
  return Math.min(1, (sum * sum) / (count * sumOfSquares));
}
