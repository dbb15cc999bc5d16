/**
 * Box-plot statistics as R's `boxplot.stats` and `fivenum` compute them.
 *
 * Hinges are Tukey's (Tukey, J. W. (1977), Exploratory Data Analysis,
 * Addison-Wesley): the medians of the lower and upper halves, the middle
 * observation counted in both halves when n is odd; they are not the type 7
 * quartiles. Whiskers reach the most extreme observations within `coefficient`
 * hinge spreads of the hinges (Tukey's fences, 1.5 by default); anything beyond
 * is an outlier. The notch is median ± 1.58 · (hinge spread) / √n (McGill, R.,
 * Tukey, J. W. and Larsen, W. A. (1978), "Variations of box plots", The
 * American Statistician 32(1), 12–16, via Chambers, Cleveland, Kleiner and
 * Tukey (1983), Graphical Methods for Data Analysis, p. 62), a rough 95%
 * interval for comparing two medians.
 */
import { show } from '../issues.js';
import { quantileSorted, sortedCopy } from './quantile.js';

/** Tukey's five-number summary: minimum, lower hinge, median, upper hinge, maximum. */
export type FiveNumber = readonly [number, number, number, number, number];

export interface BoxStats {
  /** Number of observations. */
  readonly n: number;
  /** Smallest observation not below lowerHinge − coefficient × hingeSpread. */
  readonly lowerWhisker: number;
  readonly lowerHinge: number;
  readonly median: number;
  readonly upperHinge: number;
  /** Largest observation not above upperHinge + coefficient × hingeSpread. */
  readonly upperWhisker: number;
  /** Observations beyond the whiskers, in input order (as R returns them). */
  readonly outliers: number[];
  /** median ∓ 1.58 × hingeSpread / √n. */
  readonly notch: readonly [number, number];
  /** upperHinge − lowerHinge (Tukey's H-spread), the spread the fences and notch use. */
  readonly hingeSpread: number;
  /** Type 7 quartile difference, as R's `IQR()`; differs from hingeSpread in general. */
  readonly interquartileRange: number;
  readonly mean: number;
}

export interface BoxStatsOptions {
  /** Fence length in hinge spreads; 0 puts the whiskers at the extremes and marks no outliers. Default 1.5. */
  readonly coefficient?: number;
}

function checkValues(values: ArrayLike<number>): Float64Array {
  if (values.length === 0) throw new RangeError('`values` requires at least one number, got an empty list');
  return sortedCopy(values);
}

function fiveNumberOfSorted(sorted: Float64Array): FiveNumber {
  const count = sorted.length;
  // R's fivenum: n4 <- floor((n + 3) / 2) / 2; d <- c(1, n4, (n + 1) / 2, n + 1 - n4, n)
  const quarterDepth = Math.floor((count + 3) / 2) / 2;
  const depths = [1, quarterDepth, (count + 1) / 2, count + 1 - quarterDepth, count];
  const atDepth = (depth: number): number =>
    0.5 * ((sorted[Math.floor(depth) - 1] as number) + (sorted[Math.ceil(depth) - 1] as number));
  return depths.map(atDepth) as unknown as FiveNumber;
}

/**
 * Tukey's five-number summary, as R's `fivenum()`.
 *
 * Cost: O(n log n) for the sort.
 *
 * @throws RangeError on empty input or a NaN value.
 * @example
 *   fiveNumber([1, 3, 4, 7, 8, 9, 12, 15, 20, 21]); // [1, 4, 8.5, 15, 21]
 */
export function fiveNumber(values: ArrayLike<number>): FiveNumber {
  return fiveNumberOfSorted(checkValues(values));
}

/** Neumaier's compensated sum (Neumaier, A. (1974), ZAMM 54, 39–51). */
function compensatedSum(values: ArrayLike<number>): number {
  let sum = 0;
  let compensation = 0;
  for (let index = 0; index < values.length; index += 1) {
    const value = values[index] as number;
    const next = sum + value;
    compensation += Math.abs(sum) >= Math.abs(value) ? sum - next + value : value - next + sum;
    sum = next;
  }
  // With an infinite term the compensation is NaN; the plain sum is then the answer.
  return Number.isFinite(sum) ? sum + compensation : sum;
}

/**
 * The statistics a box plot draws, exactly as R's `boxplot.stats(x, coef)`,
 * plus the type 7 interquartile range and the mean. Use it to summarise a
 * per-player distribution (latency, hit rate) and flag the unusual ones.
 *
 * Cost: O(n log n) for the sort.
 *
 * @param values the sample, no NaN (±Infinity allowed, as in R).
 * @param options.coefficient fence length in hinge spreads, default 1.5.
 * @throws RangeError on empty input, a NaN value, or a negative coefficient.
 * @example
 *   boxStats([1, 3, 4, 7, 8, 9, 12, 15, 20, 21, 50]).outliers; // [50]
 */
export function boxStats(values: ArrayLike<number>, options: BoxStatsOptions = {}): BoxStats {
  const coefficient = options.coefficient ?? 1.5;
  if (!(coefficient >= 0)) {
    throw new RangeError(`\`coefficient\` requires a number >= 0, got ${show(coefficient)}`);
  }
  const sorted = checkValues(values);
  const count = sorted.length;
  const [minimum, lowerHinge, median, upperHinge, maximum] = fiveNumberOfSorted(sorted);
  const hingeSpread = upperHinge - lowerHinge;

  let lowerWhisker = minimum;
  let upperWhisker = maximum;
  const outliers: number[] = [];
  if (coefficient > 0) {
    // As R: with a NaN spread (infinite hinges) the non-finite values are the outliers.
    const isOutlier = Number.isNaN(hingeSpread)
      ? (value: number) => !Number.isFinite(value)
      : (value: number) =>
          value < lowerHinge - coefficient * hingeSpread || value > upperHinge + coefficient * hingeSpread;
    for (let index = 0; index < values.length; index += 1) {
      const value = values[index] as number;
      if (isOutlier(value)) outliers.push(value);
    }
    if (outliers.length > 0) {
      lowerWhisker = Infinity;
      upperWhisker = -Infinity;
      for (const value of sorted) {
        if (isOutlier(value)) continue;
        if (value < lowerWhisker) lowerWhisker = value;
        if (value > upperWhisker) upperWhisker = value;
      }
    }
  }

  // R: stats[3] + c(-1.58, 1.58) * iqr / sqrt(n), in that order of operations.
  const root = Math.sqrt(count);
  const notch: readonly [number, number] = [median + (-1.58 * hingeSpread) / root, median + (1.58 * hingeSpread) / root];

  return {
    n: count,
    lowerWhisker,
    lowerHinge,
    median,
    upperHinge,
    upperWhisker,
    outliers,
    notch,
    hingeSpread,
    interquartileRange: quantileSorted(sorted, 0.75, 7) - quantileSorted(sorted, 0.25, 7),
    mean: compensatedSum(sorted) / count,
  };
}
