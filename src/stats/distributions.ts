/**
 * Distribution functions, from the stdlib project's implementations (ports of
 * Cephes / Boost algorithms with documented accuracy). Wrapped here only to
 * give them names in words and the upper tails without cancellation.
 *
 * Checked against R 4.2.2 `pnorm`/`qnorm`/`dnorm` (test/stats/distributions.test.ts).
 */
import normalCdfImpl from '@stdlib/stats-base-dists-normal-cdf';
import normalPdfImpl from '@stdlib/stats-base-dists-normal-pdf';
import complementaryErrorInverse from '@stdlib/math-base-special-erfcinv';
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

/**
 * Standard normal quantile (inverse CDF); -Infinity at 0, Infinity at 1.
 * As -sqrt(2) erfcinv(2p) below one half and sqrt(2) erfcinv(2(1 - p)) above,
 * so that small tail probabilities keep their digits (the form
 * sqrt(2) erfinv(2p - 1) loses them to cancellation in 2p - 1).
 */
export function normalQuantile(p: number): number {
  if (Number.isNaN(p) || p < 0 || p > 1) return Number.NaN;
  return p < 0.5 ? -Math.SQRT2 * complementaryErrorInverse(2 * p) : Math.SQRT2 * complementaryErrorInverse(2 * (1 - p));
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
