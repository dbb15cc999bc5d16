/**
 * Distribution functions, from the stdlib project's implementations (ports of
 * Cephes / Boost algorithms with documented accuracy). Wrapped here only to
 * give them names in words and the upper tails without cancellation.
 *
 * Checked against R 4.2.2 `pnorm`/`qnorm`/`dnorm` (test/stats/distributions.test.ts).
 */
import normalCdfImpl from '@stdlib/stats-base-dists-normal-cdf';
import normalPdfImpl from '@stdlib/stats-base-dists-normal-pdf';
import normalQuantileImpl from '@stdlib/stats-base-dists-normal-quantile';
import gammaIncomplete from '@stdlib/math-base-special-gammainc';

/** Standard normal cumulative distribution function P(Z <= x). */
export function normalCdf(x: number): number {
  return normalCdfImpl(x, 0, 1);
}

/** Standard normal upper tail P(Z > x), accurate far into the tail (no 1 - cdf cancellation). */
export function normalUpperTail(x: number): number {
  return normalCdfImpl(-x, 0, 1);
}

/** Standard normal density. */
export function normalDensity(x: number): number {
  return normalPdfImpl(x, 0, 1);
}

/** Standard normal quantile (inverse CDF); -Infinity at 0, Infinity at 1. */
export function normalQuantile(p: number): number {
  return normalQuantileImpl(p, 0, 1);
}

/** Two-sided p-value of a standard normal statistic: 2 P(Z > |z|). */
export function twoSidedNormalPValue(z: number): number {
  return 2 * normalUpperTail(Math.abs(z));
}

/**
 * Chi-square upper tail P(X > x) with `degreesOfFreedom` degrees of freedom,
 * as the regularised upper incomplete gamma function Q(k/2, x/2).
 */
export function chiSquareUpperTail(x: number, degreesOfFreedom: number): number {
  if (x <= 0) return 1;
  return gammaIncomplete(x / 2, degreesOfFreedom / 2, true, true);
}
