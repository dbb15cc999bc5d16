/**
 * Sample quantiles, definitions 1–9 of Hyndman, R. J. and Fan, Y. (1996),
 * "Sample quantiles in statistical packages", The American Statistician 50(4),
 * 361–365, numbered as there and as in R's `quantile(type = )`.
 *
 * The arithmetic follows R's `quantile.default` step by step, so the results
 * agree with R to the last bit on ordinary data: type 7 uses R's
 * `1 + (n - 1) p` index, the other types the general `n p + m` form, with a
 * fuzz of 4·DBL_EPSILON so that an `n p + m` that is an integer up to rounding
 * is treated as one. R has always applied that fuzz to types 4–6, 8 and 9; it
 * applies it to types 1–3 only since R 4.5.0 (the `fuzz` argument, default
 * 4·DBL_EPSILON for every type but 7), and that is what is done here. For the
 * discontinuous types 1–3 the fuzz decides which order statistic is returned,
 * so this differs from R 4.2.2 exactly where `n p` (type 3: `n p - 1/2`) is
 * within 4·DBL_EPSILON of an integer without being one, which can only happen
 * below 8: for x = 1..49, p = 1/49, type 2 gives 1.5 (Hyndman & Fan's
 * definition at n p = 1) where R 4.2.2 gives 1.
 */
import { show } from '../issues.js';

/** Hyndman & Fan definition number; 7 is R's and Excel's default. */
export type QuantileType = 1 | 2 | 3 | 4 | 5 | 6 | 7 | 8 | 9;

const fuzz = 4 * Number.EPSILON;

/** The (a, b) plotting-position constants of Hyndman & Fan types 4–9. */
const continuousConstants: Record<4 | 5 | 6 | 7 | 8 | 9, readonly [number, number]> = {
  4: [0, 1],
  5: [0.5, 0.5],
  6: [0, 0],
  7: [1, 1],
  8: [1 / 3, 1 / 3],
  9: [3 / 8, 3 / 8],
};

function checkArguments(length: number, probability: number, type: number): void {
  if (length === 0) throw new RangeError('`values` requires at least one number, got an empty list');
  if (!(probability >= 0 && probability <= 1)) {
    throw new RangeError(`\`probability\` requires a number in [0, 1], got ${show(probability)}`);
  }
  if (!(Number.isInteger(type) && type >= 1 && type <= 9)) {
    throw new RangeError(`\`type\` requires an integer from 1 to 9, got ${show(type)}`);
  }
}

/**
 * The `probability` quantile of data already sorted ascending (not checked:
 * unsorted input gives a meaningless answer). Use this when you need several
 * quantiles of one sample: sort once, then call it per probability.
 *
 * Cost: O(1).
 *
 * @param sorted ascending numbers, no NaN.
 * @param probability in [0, 1].
 * @param type Hyndman & Fan definition 1–9; default 7.
 * @throws RangeError on empty input, `probability` outside [0, 1], or a bad `type`.
 * @example
 *   quantileSorted([1, 3, 4, 7, 8, 9, 12, 15, 20, 21], 0.25); // 4.75
 */
export function quantileSorted(sorted: ArrayLike<number>, probability: number, type: QuantileType = 7): number {
  const count = sorted.length;
  checkArguments(count, probability, type);
  // Order statistic x[index], 1-based as in the paper; indices outside 1..n
  // are clamped to the extremes, as R does by padding the sorted vector.
  const orderStatistic = (index: number): number => sorted[Math.min(Math.max(index, 1), count) - 1] as number;

  if (type === 7) {
    // R: index <- 1 + max(n - 1, 0) * probs; lo <- floor(index); hi <- ceiling(index)
    const index = 1 + Math.max(count - 1, 0) * probability;
    const lower = Math.floor(index);
    const upper = Math.ceil(index);
    const lowerValue = orderStatistic(lower);
    const upperValue = orderStatistic(upper);
    if (!(index > lower && upperValue !== lowerValue)) return lowerValue;
    const fraction = index - lower;
    return (1 - fraction) * lowerValue + fraction * upperValue;
  }

  let position: number; // R's nppm = n p + m
  let floorIndex: number; // R's j
  let weight: number; // R's h, the weight on x[j + 1]
  if (type <= 3) {
    position = type === 3 ? count * probability - 0.5 : count * probability;
    floorIndex = Math.floor(position + fuzz);
    const isInteger = Math.abs(position - floorIndex) < fuzz;
    if (type === 1) weight = isInteger ? 0 : 1; // inverse of the empirical distribution function
    else if (type === 2) weight = isInteger ? 0.5 : 1; // the same, averaging at discontinuities
    else weight = isInteger && floorIndex % 2 === 0 ? 0 : 1; // nearest order statistic, the even one on a tie
  } else {
    const [alpha, beta] = continuousConstants[type as 4 | 5 | 6 | 8 | 9];
    position = alpha + probability * (count + 1 - alpha - beta);
    floorIndex = Math.floor(position + fuzz);
    weight = position - floorIndex;
    if (Math.abs(weight) < fuzz) weight = 0;
  }

  const lowerValue = orderStatistic(floorIndex);
  const upperValue = orderStatistic(floorIndex + 1);
  if (weight === 1) return upperValue;
  if (weight > 0 && weight < 1 && lowerValue !== upperValue) {
    return (1 - weight) * lowerValue + weight * upperValue;
  }
  return lowerValue;
}

/**
 * The `probability` quantile of unsorted data (Hyndman & Fan definition
 * `type`, default 7). Copies and sorts the input; the input is not changed.
 *
 * Cost: O(n log n) for the sort.
 *
 * @throws RangeError on empty input, a NaN value, `probability` outside
 *   [0, 1], or a bad `type`.
 * @example
 *   quantile([21, 1, 15, 3, 4, 12, 7, 20, 8, 9], 0.5, 6); // 8.5
 */
export function quantile(values: ArrayLike<number>, probability: number, type: QuantileType = 7): number {
  checkArguments(values.length, probability, type);
  return quantileSorted(sortedCopy(values), probability, type);
}

/**
 * An ascending copy of `values` as a Float64Array. Shared by the box-plot
 * statistics.
 *
 * @throws RangeError if a value is NaN.
 */
export function sortedCopy(values: ArrayLike<number>): Float64Array {
  const sorted = Float64Array.from(values);
  for (let index = 0; index < sorted.length; index += 1) {
    if (Number.isNaN(sorted[index])) {
      throw new RangeError(`\`values[${index}]\` requires a number, got NaN`);
    }
  }
  return sorted.sort();
}
